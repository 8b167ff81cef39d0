using Grpc.Net.Client;
using Microsoft.AspNetCore.Builder;
using Microsoft.Extensions.DependencyInjection;
using OpenTelemetry.Metrics;
using PathService.Contracts.V1;
using PathService.Server.Hosting;
using PathService.Server.Limits;

namespace PathService.Server.Tests.Fixtures;

/// <summary>
/// One real server for the whole test run: built by the server's own composition method, Kestrel on loopback with
/// free ports, an in-memory metrics exporter added. Tests using it run one after another (one collection), so that
/// the delta metrics read by a test belong to that test's calls.
/// </summary>
public sealed class ServerFixture : IAsyncLifetime
{
    public const int MaxBars = 5000;
    public const int MaxConcurrentAnalyses = 3;

    private readonly List<MetricSnapshot> _metrics = [];

    public WebApplication App { get; private set; } = null!;
    public GrpcChannel Channel { get; private set; } = null!;
    public StructuralPathService.StructuralPathServiceClient Client { get; private set; } = null!;
    public HttpClient Http { get; private set; } = null!;
    public AnalysisGate Gate => App.Services.GetRequiredService<AnalysisGate>();
    public string GrpcUrl { get; private set; } = "";

    public async Task InitializeAsync()
    {
        App = ServerHost.Build(
        [
            "--PathService:ListenAddress=127.0.0.1", "--PathService:GrpcPort=0", "--PathService:HttpPort=0",
            $"--PathService:Limits:MaxBars={MaxBars}", $"--PathService:Limits:MaxConcurrentAnalyses={MaxConcurrentAnalyses}",
            // No queue: a call beyond the concurrency limit is refused at once (the queue has its own tests).
            "--PathService:Limits:MaxQueuedAnalyses=0",
            "--Serilog:MinimumLevel:Default=Warning",
        ], b => b.Services.ConfigureOpenTelemetryMeterProvider(m => m.AddInMemoryExporter(_metrics,
            r => r.TemporalityPreference = MetricReaderTemporalityPreference.Delta)));
        await App.StartAsync();
        var endpoints = App.Services.GetRequiredService<BoundEndpoints>();
        GrpcUrl = BoundEndpoints.UrlOf(endpoints.Grpc!);
        Channel = GrpcChannel.ForAddress(GrpcUrl);
        Client = new StructuralPathService.StructuralPathServiceClient(Channel);
        Http = new HttpClient { BaseAddress = new Uri(BoundEndpoints.UrlOf(endpoints.Http!)) };
    }

    /// <summary>Exports pending measurements and returns (and forgets) what was exported since the last call.</summary>
    public List<MetricSnapshot> CollectMetrics()
    {
        App.Services.GetRequiredService<MeterProvider>().ForceFlush();
        lock (_metrics)
        {
            var copy = _metrics.ToList();
            _metrics.Clear();
            return copy;
        }
    }

    /// <summary>Sum of a counter's (delta) points, or of a histogram's counts, over the given snapshots.</summary>
    public static double Total(IEnumerable<MetricSnapshot> snapshots, string name, Func<MetricPoint, bool>? filter = null)
    {
        double total = 0;
        foreach (var s in snapshots.Where(s => s.Name == name))
            foreach (var p in s.MetricPoints)
            {
                if (filter is not null && !filter(p)) continue;
                total += s.MetricType switch
                {
                    MetricType.LongSum or MetricType.LongSumNonMonotonic => p.GetSumLong(),
                    MetricType.DoubleSum or MetricType.DoubleSumNonMonotonic => p.GetSumDouble(),
                    MetricType.Histogram => p.GetHistogramCount(),
                    _ => 0,
                };
            }
        return total;
    }

    /// <summary>Waits (bounded) until no analysis holds a slot.</summary>
    public async Task<bool> WaitForIdleAsync(TimeSpan timeout)
    {
        var until = DateTime.UtcNow + timeout;
        while (Gate.Active > 0 && DateTime.UtcNow < until) await Task.Delay(20);
        return Gate.Active == 0;
    }

    public async Task DisposeAsync()
    {
        Http.Dispose();
        Channel.Dispose();
        await App.StopAsync();
        await App.DisposeAsync();
    }
}

[CollectionDefinition(Name)]
public sealed class ServerCollection : ICollectionFixture<ServerFixture>
{
    public const string Name = "server";
}
