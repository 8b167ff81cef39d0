using System.Collections.Concurrent;
using System.Diagnostics;
using System.Globalization;
using System.Net;
using System.Net.Sockets;
using Grpc.Core;
using Grpc.Health.V1;
using Grpc.Net.Client;
using Microsoft.Extensions.DependencyInjection;
using PathService.Contracts.V1;
using PathService.Server.Hosting;
using PathService.Server.Tests.Fixtures;

// Load and soak driver. Runs N concurrent streaming traces against a loopback PathService for a set time and prints
// throughput, latency percentiles (whole trace and time to first point), errors by status code and the server's memory
// (working set, GC heap) at start, periodically, and at the end.
//
// By default it starts the server itself as a child process (dotnet PathService.Server.dll, loopback, free ports), so
// that the memory figures are the server's alone. --in-process hosts it in this process instead; --server URL drives
// an already running server (loopback only), --metrics URL then names its HTTP/1.1 port for the memory figures.
// Throughout the run a probe on a connection of its own asks grpc.health.v1 Health/Check every --health-every ms
// (default 100) and the latency percentiles are printed: health must stay responsive while every slot computes.
//
// Usage: dotnet run -c Release --project bench/PathService.Load -- [--concurrency 4] [--duration 30] [--model truss|capN]
//        [--points 40] [--report 60] [--max-calls 1000000] [--slots N] [--api-key KEY] [--server URL] [--metrics URL] [--in-process]
//        [--health-every 100]
var opt = Options.Parse(args);
var clock = Stopwatch.StartNew();
await using var server = await Server.StartAsync(opt);
Console.WriteLine($"server {server.GrpcUrl} ({server.Kind}); model {opt.Model}, {opt.Points} points per trace, concurrency {opt.Concurrency}, duration {opt.Duration.TotalSeconds:0} s");

using var channel = GrpcChannel.ForAddress(server.GrpcUrl, new GrpcChannelOptions { MaxReceiveMessageSize = 64 << 20 });
var client = new StructuralPathService.StructuralPathServiceClient(channel);
var headers = opt.ApiKey is { } k ? new Metadata { { "x-api-key", k } } : null;
var request = Workload.Request(opt.Model, opt.Points);

// Warm-up: one trace (JIT, first connection) that is not counted.
await Workload.RunOneAsync(client, request, headers, CancellationToken.None);
await server.ForceGcAsync();
var before = await server.MemoryAsync();
Console.WriteLine($"memory at start: {before}");

var stats = new Stats();
var end = DateTime.UtcNow + opt.Duration;
long started = 0;
var report = Task.Run(async () =>
{
    var t0 = Stopwatch.StartNew();
    while (DateTime.UtcNow < end)
    {
        var wait = end - DateTime.UtcNow;
        await Task.Delay(wait < opt.Report ? wait : opt.Report);
        if (DateTime.UtcNow >= end) break;
        Console.WriteLine($"[{t0.Elapsed.TotalSeconds,6:0} s] traces {stats.Completed}, errors {stats.ErrorCount}, memory {await server.MemoryAsync()}");
    }
});
// Health probe on its own connection (a channel of its own opens its own HTTP/2 connection).
using var healthChannel = GrpcChannel.ForAddress(server.GrpcUrl);
var healthClient = new Health.HealthClient(healthChannel);
var healthMs = new List<double>();
int healthFailures = 0;
var probe = Task.Run(async () =>
{
    while (DateTime.UtcNow < end)
    {
        var t = Stopwatch.StartNew();
        try
        {
            var h = await healthClient.CheckAsync(new HealthCheckRequest(), deadline: DateTime.UtcNow.AddSeconds(10));
            if (h.Status != HealthCheckResponse.Types.ServingStatus.Serving) Interlocked.Increment(ref healthFailures);
            lock (healthMs) healthMs.Add(t.Elapsed.TotalMilliseconds);
        }
        catch (RpcException) { Interlocked.Increment(ref healthFailures); }
        await Task.Delay(opt.HealthEvery);
    }
});
var runClock = Stopwatch.StartNew();
var workers = Enumerable.Range(0, opt.Concurrency).Select(_ => Task.Run(async () =>
{
    // Bounded: stops at the end time or after max-calls calls in all.
    while (DateTime.UtcNow < end && Interlocked.Increment(ref started) <= opt.MaxCalls)
    {
        try
        {
            var r = await Workload.RunOneAsync(client, request, headers, CancellationToken.None);
            stats.Add(r);
        }
        catch (RpcException ex)
        {
            stats.Error(ex.StatusCode);
            if (ex.StatusCode == StatusCode.ResourceExhausted) await Task.Delay(50);
        }
    }
})).ToArray();
await Task.WhenAll(workers);
double seconds = runClock.Elapsed.TotalSeconds;
await report;
await probe;

var afterNoGc = await server.MemoryAsync();
await server.ForceGcAsync();
var after = await server.MemoryAsync();
Console.WriteLine();
Console.WriteLine($"traces completed      {stats.Completed} in {seconds:0.0} s  ({stats.Completed / seconds:0.00} traces/s, {stats.Points / seconds:0} points/s)");
Console.WriteLine($"sustained concurrency {opt.Concurrency} streams");
Console.WriteLine($"trace time (ms)       {stats.Percentiles(stats.TraceMs)}");
Console.WriteLine($"first point (ms)      {stats.Percentiles(stats.FirstPointMs)}");
Console.WriteLine($"health check (ms)     {stats.Percentiles(healthMs)}, not serving or failed {healthFailures}");
Console.WriteLine($"errors                {(stats.ErrorCount == 0 ? "none" : string.Join(", ", stats.Errors.OrderBy(e => e.Key).Select(e => $"{e.Key} {e.Value}")))}");
Console.WriteLine($"memory at start       {before}");
Console.WriteLine($"memory at end         {afterNoGc}  (before a forced GC)");
Console.WriteLine($"memory at end, GC'd   {after}");
Console.WriteLine($"wall time             {clock.Elapsed.TotalSeconds:0.0} s");
return stats.ErrorCount == 0 ? 0 : 1;

sealed record Options(int Concurrency, TimeSpan Duration, string Model, int Points, TimeSpan Report, long MaxCalls,
    int? Slots, string? ApiKey, string? ServerUrl, string? MetricsUrl, bool InProcess, TimeSpan HealthEvery)
{
    public static Options Parse(string[] a)
    {
        string? Get(string name)
        {
            int i = Array.IndexOf(a, name);
            return i >= 0 && i + 1 < a.Length ? a[i + 1] : null;
        }
        double D(string name, double d) => Get(name) is { } s ? double.Parse(s, CultureInfo.InvariantCulture) : d;
        int concurrency = (int)D("--concurrency", 4);
        var o = new Options(
            Math.Clamp(concurrency, 1, 256), TimeSpan.FromSeconds(Math.Clamp(D("--duration", 30), 1, 24 * 3600)),
            Get("--model") ?? "truss", Math.Clamp((int)D("--points", 40), 1, 5000), TimeSpan.FromSeconds(Math.Max(1, D("--report", 60))),
            Math.Max(1, (long)D("--max-calls", 1_000_000)), Get("--slots") is { } s ? int.Parse(s, CultureInfo.InvariantCulture) : null,
            Get("--api-key"), Get("--server"), Get("--metrics"), a.Contains("--in-process"),
            TimeSpan.FromMilliseconds(Math.Clamp(D("--health-every", 100), 10, 60_000)));
        foreach (var url in new[] { o.ServerUrl, o.MetricsUrl })
            if (url is not null && !IsLoopback(new Uri(url)))
                throw new ArgumentException($"{url}: the load command drives loopback servers only");
        return o;
    }

    private static bool IsLoopback(Uri u) => u.IsLoopback || (IPAddress.TryParse(u.Host, out var ip) && IPAddress.IsLoopback(ip));
}

static class Workload
{
    /// <summary>"truss": the shallow two-bar truss traced through both limit points; "capN": an N×N lattice cap.</summary>
    public static TracePathRequest Request(string model, int points)
    {
        if (model.StartsWith("cap", StringComparison.Ordinal))
        {
            var (m, l, crown) = DemoStructures.LatticeCap(int.Parse(model[3..], CultureInfo.InvariantCulture));
            return new TracePathRequest
            {
                Model = m, LoadCase = l,
                Controls = new SolverControls { InitialLoadIncrement = 0.05, MaxPoints = points, FullStateAtEnd = false, Monitored = { crown } },
            };
        }
        var controls = DemoStructures.ThroughBothLimitPoints();
        controls.MaxPoints = points;
        return new TracePathRequest { Model = DemoStructures.TwoBarTruss(), LoadCase = DemoStructures.ApexLoad(), Controls = controls };
    }

    public static async Task<(double TraceMs, double FirstPointMs, int Points)> RunOneAsync(
        StructuralPathService.StructuralPathServiceClient client, TracePathRequest request, Metadata? headers, CancellationToken ct)
    {
        var clock = Stopwatch.StartNew();
        double first = double.NaN;
        int points = 0;
        using var call = client.TracePath(request, headers, deadline: DateTime.UtcNow.AddMinutes(5), cancellationToken: ct);
        while (await call.ResponseStream.MoveNext(ct))
            if (call.ResponseStream.Current.Point is not null)
            {
                if (points++ == 0) first = clock.Elapsed.TotalMilliseconds;
            }
        return (clock.Elapsed.TotalMilliseconds, first, points);
    }
}

sealed class Stats
{
    private readonly object _gate = new();
    public List<double> TraceMs { get; } = [];
    public List<double> FirstPointMs { get; } = [];
    public ConcurrentDictionary<StatusCode, int> Errors { get; } = new();
    public long Points;
    public int Completed { get { lock (_gate) return TraceMs.Count; } }
    public int ErrorCount => Errors.Values.Sum();

    public void Add((double TraceMs, double FirstPointMs, int Points) r)
    {
        lock (_gate)
        {
            TraceMs.Add(r.TraceMs);
            if (double.IsFinite(r.FirstPointMs)) FirstPointMs.Add(r.FirstPointMs);
            Points += r.Points;
        }
    }

    public void Error(StatusCode code) => Errors.AddOrUpdate(code, 1, (_, n) => n + 1);

    public string Percentiles(List<double> values)
    {
        double[] v;
        lock (_gate) v = values.OrderBy(x => x).ToArray();
        if (v.Length == 0) return "-";
        double P(double p) => v[Math.Min(v.Length - 1, (int)Math.Ceiling(p * v.Length) - 1)];
        return $"p50 {P(0.50):0.0}  p95 {P(0.95):0.0}  p99 {P(0.99):0.0}  max {v[^1]:0.0}  (n = {v.Length})";
    }
}

/// <summary>Working set and GC heap of the server, read from its own runtime metrics (Prometheus text on the HTTP/1.1 port).</summary>
readonly record struct Memory(double WorkingSetMiB, double GcHeapMiB, double Threads)
{
    public override string ToString() => $"working set {WorkingSetMiB:0.0} MiB, GC heap {GcHeapMiB:0.0} MiB, threads {Threads:0}";
}

sealed class Server : IAsyncDisposable
{
    public string GrpcUrl { get; private init; } = "";
    public string Kind { get; private init; } = "";
    private string? _metricsUrl;
    private Process? _child;
    private Microsoft.AspNetCore.Builder.WebApplication? _app;
    private readonly HttpClient _http = new() { Timeout = TimeSpan.FromSeconds(10) };

    public static async Task<Server> StartAsync(Options o)
    {
        if (o.ServerUrl is { } url) return new Server { GrpcUrl = url, Kind = "external", _metricsUrl = o.MetricsUrl };
        int grpcPort = FreePort(), httpPort = FreePort();
        string[] config =
        [
            "--PathService:ListenAddress=127.0.0.1", $"--PathService:GrpcPort={grpcPort}", $"--PathService:HttpPort={httpPort}",
            $"--PathService:Limits:MaxConcurrentAnalyses={o.Slots ?? Environment.ProcessorCount}",
            $"--PathService:Limits:MaxQueuedAnalyses={Math.Max(8, o.Concurrency)}",
            "--Serilog:MinimumLevel:Default=Warning",
        ];
        var s = new Server { GrpcUrl = $"http://127.0.0.1:{grpcPort}", _metricsUrl = $"http://127.0.0.1:{httpPort}/metrics", Kind = o.InProcess ? "in-process" : "child process" };
        if (o.InProcess)
        {
            s._app = ServerHost.Build(config);
            await s._app.StartAsync();
        }
        else
        {
            string dll = Path.Combine(AppContext.BaseDirectory, "PathService.Server.dll");
            var psi = new ProcessStartInfo("dotnet") { RedirectStandardOutput = true, RedirectStandardError = true, UseShellExecute = false };
            psi.ArgumentList.Add(dll);
            foreach (var c in config) psi.ArgumentList.Add(c);
            psi.Environment["DOTNET_ENVIRONMENT"] = "Production";
            s._child = Process.Start(psi) ?? throw new InvalidOperationException("could not start the server");
            s._child.OutputDataReceived += (_, _) => { };
            s._child.ErrorDataReceived += (_, e) => { if (e.Data is { } d) Console.Error.WriteLine($"server: {d}"); };
            s._child.BeginOutputReadLine();
            s._child.BeginErrorReadLine();
        }
        await s.WaitHealthyAsync(TimeSpan.FromSeconds(60));
        return s;
    }

    private async Task WaitHealthyAsync(TimeSpan timeout)
    {
        using var channel = GrpcChannel.ForAddress(GrpcUrl);
        var health = new Health.HealthClient(channel);
        var until = DateTime.UtcNow + timeout;
        while (true)
        {
            try
            {
                var r = await health.CheckAsync(new HealthCheckRequest(), deadline: DateTime.UtcNow.AddSeconds(2));
                if (r.Status == HealthCheckResponse.Types.ServingStatus.Serving) return;
            }
            catch (RpcException) when (DateTime.UtcNow < until && _child is not { HasExited: true }) { }
            if (DateTime.UtcNow >= until || _child is { HasExited: true }) throw new InvalidOperationException("the server did not become healthy");
            await Task.Delay(200);
        }
    }

    /// <summary>In-process only: a full blocking collection, so that "GC'd" figures are comparable. A child process is left alone.</summary>
    public Task ForceGcAsync()
    {
        if (_app is not null) { GC.Collect(); GC.WaitForPendingFinalizers(); GC.Collect(); }
        return Task.Delay(1500); // at least one runtime-metrics refresh
    }

    public async Task<Memory> MemoryAsync()
    {
        if (_metricsUrl is null) return new Memory(double.NaN, double.NaN, double.NaN);
        try
        {
            string text = await _http.GetStringAsync(_metricsUrl);
            double Sum(string prefix) => text.Split('\n')
                .Where(l => l.StartsWith(prefix, StringComparison.Ordinal))
                .Select(l => double.Parse(l[(l.LastIndexOf(' ') + 1)..], CultureInfo.InvariantCulture)).DefaultIfEmpty(double.NaN).Sum();
            double ws = Sum("dotnet_process_memory_working_set");
            if (_child is { HasExited: false } c)
            {
                c.Refresh();
                ws = c.WorkingSet64;
            }
            return new Memory(ws / (1 << 20), Sum("dotnet_gc_last_collection_heap_size") / (1 << 20), Sum("dotnet_thread_pool_thread_count"));
        }
        catch (HttpRequestException) { return new Memory(double.NaN, double.NaN, double.NaN); }
    }

    private static int FreePort()
    {
        using var l = new TcpListener(IPAddress.Loopback, 0);
        l.Start();
        return ((IPEndPoint)l.LocalEndpoint).Port;
    }

    public async ValueTask DisposeAsync()
    {
        _http.Dispose();
        if (_app is not null) { await _app.StopAsync(); await _app.DisposeAsync(); }
        if (_child is { HasExited: false })
        {
            _child.Kill(entireProcessTree: true);
            await _child.WaitForExitAsync();
        }
        _child?.Dispose();
    }
}
