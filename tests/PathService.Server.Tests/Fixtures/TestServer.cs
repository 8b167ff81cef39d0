using System.Security.Cryptography.X509Certificates;
using Grpc.Core;
using Grpc.Net.Client;
using Microsoft.AspNetCore.Builder;
using Microsoft.Extensions.DependencyInjection;
using PathService.Contracts.V1;
using PathService.Server.Hosting;
using PathService.Server.Limits;

namespace PathService.Server.Tests.Fixtures;

/// <summary>
/// A server of its own for tests that need settings other than the shared fixture's (limits, keys, TLS, shutdown):
/// the real composition, Kestrel on loopback with free ports, logs at Warning.
/// </summary>
public sealed class TestServer : IAsyncDisposable
{
    public WebApplication App { get; private init; } = null!;
    public GrpcChannel Channel { get; private init; } = null!;
    public StructuralPathService.StructuralPathServiceClient Client { get; private init; } = null!;
    public string GrpcUrl { get; private init; } = "";
    public string HttpUrl { get; private init; } = "";
    public AnalysisGate Gate => App.Services.GetRequiredService<AnalysisGate>();
    private bool _stopped;

    /// <param name="settings">Configuration keys below "PathService", e.g. "Limits:MaxNodes=10"; an entry starting with "--" is passed as is (e.g. a log level).</param>
    /// <param name="serverCertificate">With TLS: the certificate the client accepts (by thumbprint).</param>
    public static async Task<TestServer> StartAsync(IEnumerable<string> settings, X509Certificate2? serverCertificate = null)
    {
        string[] args =
        [
            "--PathService:ListenAddress=127.0.0.1", "--PathService:GrpcPort=0", "--PathService:HttpPort=0",
            "--Serilog:MinimumLevel:Default=Warning",
            .. settings.Select(s => s.StartsWith("--", StringComparison.Ordinal) ? s : "--PathService:" + s),
        ];
        var app = ServerHost.Build(args);
        await app.StartAsync();
        var ep = app.Services.GetRequiredService<BoundEndpoints>();
        var handler = new SocketsHttpHandler();
        if (serverCertificate is not null)
            handler.SslOptions.RemoteCertificateValidationCallback = (_, cert, _, _) =>
                cert is not null && cert.GetCertHashString() == serverCertificate.GetCertHashString();
        var channel = GrpcChannel.ForAddress(ep.GrpcUrl, new GrpcChannelOptions { HttpHandler = handler, MaxReceiveMessageSize = 64 << 20 });
        return new TestServer
        {
            App = app, Channel = channel, Client = new StructuralPathService.StructuralPathServiceClient(channel),
            GrpcUrl = ep.GrpcUrl, HttpUrl = ep.Http is { } h ? BoundEndpoints.UrlOf(h, ep.Tls) : "",
        };
    }

    public async Task<bool> WaitForIdleAsync(TimeSpan timeout)
    {
        var until = DateTime.UtcNow + timeout;
        while ((Gate.Active > 0 || Gate.Queued > 0) && DateTime.UtcNow < until) await Task.Delay(20);
        return Gate.Active == 0 && Gate.Queued == 0;
    }

    public async Task StopAsync()
    {
        if (_stopped) return;
        _stopped = true;
        await App.StopAsync();
    }

    /// <summary>Stopped servers are kept, not disposed, until the test run ends; see <see cref="DisposeAsync"/>.</summary>
    private static readonly List<WebApplication> Retired = [];

    /// <summary>
    /// Stops the server but does not dispose its service provider: that would dispose its "PathService" meter, and the
    /// OpenTelemetry SDK of the shared fixture (which listens to every meter of that name in the process) then drops
    /// the metric streams it shares with it, so the fixture's metric tests would lose their own measurements.
    /// </summary>
    public async ValueTask DisposeAsync()
    {
        Channel.Dispose();
        await StopAsync();
        lock (Retired) Retired.Add(App);
    }
}

/// <summary>Requests the tests share.</summary>
public static class Requests
{
    /// <summary>A trace that would run for a long time: thousands of tiny steps on a 120-bar cap.</summary>
    public static TracePathRequest LongTrace()
    {
        var (model, loads, crown) = DemoStructures.LatticeCap(6);
        return new TracePathRequest
        {
            Model = model, LoadCase = loads,
            Controls = new SolverControls { InitialLoadIncrement = 0.002, MaxIncrementRatio = 1, MaxPoints = 5000, Monitored = { crown } },
        };
    }

    /// <summary>The two-bar truss through both limit points: a complete, short trace.</summary>
    public static TracePathRequest Truss() => new()
    {
        Model = DemoStructures.TwoBarTruss(), LoadCase = DemoStructures.ApexLoad(), Controls = DemoStructures.ThroughBothLimitPoints(),
    };

    /// <summary>Reads a whole stream; returns every message.</summary>
    public static async Task<List<TracePathResponse>> ReadAllAsync(AsyncServerStreamingCall<TracePathResponse> call)
    {
        var list = new List<TracePathResponse>();
        while (await call.ResponseStream.MoveNext()) list.Add(call.ResponseStream.Current);
        return list;
    }
}
