using System.Text.RegularExpressions;
using Grpc.Core;
using Grpc.Health.V1;
using Grpc.Net.Client;
using Microsoft.AspNetCore.Builder;
using Microsoft.Extensions.Configuration;
using Microsoft.Extensions.DependencyInjection;
using PathService.Contracts.V1;
using PathService.Server.Hosting;

namespace PathService.Deploy.Tests;

/// <summary>
/// The real server (its own composition method, Kestrel on loopback with free ports, appsettings.json as shipped),
/// exercised once so that every instrument has recorded something: a trace through two limit points, a trace that
/// cuts steps and diverges, an invalid request, a linear analysis. Then /metrics is scraped once.
/// </summary>
public sealed class LiveServer : IAsyncLifetime
{
    public WebApplication App { get; private set; } = null!;
    public string GrpcUrl { get; private set; } = "";
    public string HttpUrl { get; private set; } = "";
    public string MetricsText { get; private set; } = "";
    /// <summary>Names of the series on /metrics (with _bucket/_sum/_count/_total as exported).</summary>
    public HashSet<string> SeriesNames { get; } = new(StringComparer.Ordinal);

    public async Task InitializeAsync()
    {
        App = ServerHost.Build(["--PathService:ListenAddress=127.0.0.1", "--PathService:GrpcPort=0", "--PathService:HttpPort=0",
            "--Serilog:MinimumLevel:Default=Warning"]);
        await App.StartAsync();
        var ep = App.Services.GetRequiredService<BoundEndpoints>();
        GrpcUrl = BoundEndpoints.UrlOf(ep.Grpc!);
        HttpUrl = BoundEndpoints.UrlOf(ep.Http!);

        using var channel = GrpcChannel.ForAddress(GrpcUrl);
        var client = new StructuralPathService.StructuralPathServiceClient(channel);
        await Drain(client.TracePath(new TracePathRequest
        {
            Model = Truss(), LoadCase = Load(),
            Controls = new SolverControls { Method = ContinuationMethod.ArcLength, InitialLoadIncrement = 0.5, MaxPoints = 400, TargetDisplacementDof = ApexY, TargetDisplacement = -0.8 },
        }));
        await Drain(client.TracePath(new TracePathRequest
        {
            Model = Truss(), LoadCase = Load(),
            Controls = new SolverControls { Method = ContinuationMethod.LoadControl, InitialLoadIncrement = 0.25, TargetLoadFactor = 10 },
        }));
        var bad = Truss();
        bad.Bars[0].Area = 0;
        await Assert.ThrowsAsync<RpcException>(() => Drain(client.TracePath(new TracePathRequest { Model = bad, LoadCase = Load() })));
        await client.AnalyzeLinearAsync(new AnalyzeLinearRequest { Model = Truss(), LoadCase = Load() });

        using var http = new HttpClient();
        MetricsText = await http.GetStringAsync(HttpUrl + Options().Telemetry.PrometheusPath);
        foreach (Match m in Regex.Matches(MetricsText, @"^([a-zA-Z_:][a-zA-Z0-9_:]*)(?:\{| )", RegexOptions.Multiline))
            SeriesNames.Add(m.Groups[1].Value);
    }

    /// <summary>The settings as shipped in the server's appsettings.json.</summary>
    public static PathService.Server.Configuration.PathServiceOptions Options() =>
        new ConfigurationBuilder().AddJsonFile(Repo.PathOf("src", "PathService.Server", "appsettings.json")).Build()
            .GetSection(PathService.Server.Configuration.PathServiceOptions.Section).Get<PathService.Server.Configuration.PathServiceOptions>()!;

    public async Task<HealthCheckResponse.Types.ServingStatus> HealthAsync(string service)
    {
        using var channel = GrpcChannel.ForAddress(GrpcUrl);
        try { return (await new Health.HealthClient(channel).CheckAsync(new HealthCheckRequest { Service = service })).Status; }
        catch (RpcException ex) when (ex.StatusCode == StatusCode.NotFound) { return HealthCheckResponse.Types.ServingStatus.ServiceUnknown; }
    }

    private static async Task Drain(AsyncServerStreamingCall<TracePathResponse> call)
    {
        using (call) await foreach (var _ in call.ResponseStream.ReadAllAsync()) { }
    }

    private static DofRef ApexY => new() { Node = "apex", Direction = Direction.Y };
    private static LoadCase Load() => new() { Reference = { new NodalLoad { Node = "apex", Fy = -10 } } };

    /// <summary>Shallow two-bar truss, apex free only vertically.</summary>
    private static StructureModel Truss()
    {
        var m = new StructureModel { Name = "two-bar truss", Units = new UnitLabels { Force = "kN", Length = "m" } };
        m.Nodes.Add(new Node { Id = "left", X = -4 });
        m.Nodes.Add(new Node { Id = "apex", Y = 0.35 });
        m.Nodes.Add(new Node { Id = "right", X = 4 });
        m.Bars.Add(new Bar { Id = "bar-L", StartNode = "left", EndNode = "apex", ElasticModulus = 2e8, Area = 1.2e-3 });
        m.Bars.Add(new Bar { Id = "bar-R", StartNode = "apex", EndNode = "right", ElasticModulus = 2e8, Area = 1.2e-3 });
        foreach (var n in new[] { "left", "right" })
            foreach (var d in new[] { Direction.X, Direction.Y, Direction.Z })
                m.Supports.Add(new Support { Node = n, Direction = d });
        m.Supports.Add(new Support { Node = "apex", Direction = Direction.X });
        m.Supports.Add(new Support { Node = "apex", Direction = Direction.Z });
        return m;
    }

    public async Task DisposeAsync()
    {
        await App.StopAsync();
        await App.DisposeAsync();
    }
}

[CollectionDefinition(Name)]
public sealed class LiveServerCollection : ICollectionFixture<LiveServer>
{
    public const string Name = "live server";
}
