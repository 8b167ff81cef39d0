using System.Diagnostics;
using Microsoft.AspNetCore.Builder;
using Microsoft.Extensions.DependencyInjection;
using PathService.Cli.Backends;
using PathService.Cli.Output;
using PathService.Contracts.V1;
using PathService.Server.Hosting;

namespace PathService.Cli.Tests;

internal static class Repo
{
    public static string Root { get; } = Find();
    public static string Example(string name) => Path.Combine(Root, "examples", name);

    private static string Find()
    {
        for (var d = new DirectoryInfo(AppContext.BaseDirectory); d is not null; d = d.Parent)
            if (File.Exists(Path.Combine(d.FullName, "PathService.sln"))) return d.FullName;
        throw new InvalidOperationException("PathService.sln not found");
    }
}

/// <summary>Runs the built pathtrace as a separate process, from its own output folder (same configuration as the tests).</summary>
internal static class Pathtrace
{
    /// <summary>
    /// src/PathService.Cli/bin/{Debug|Release}/{tfm}/pathtrace.dll. Not the copy beside the tests: this folder's
    /// assemblies were chosen for the test project (with the ASP.NET Core framework), not for pathtrace's own deps.json.
    /// </summary>
    public static string Dll { get; } = Locate();

    private static string Locate()
    {
        var tfm = new DirectoryInfo(AppContext.BaseDirectory.TrimEnd(Path.DirectorySeparatorChar));
        string path = Path.Combine(Repo.Root, "src", "PathService.Cli", "bin", tfm.Parent!.Name, tfm.Name, "pathtrace.dll");
        return File.Exists(path) ? path : throw new FileNotFoundException("pathtrace is not built", path);
    }

    public static Task<(int Code, string Stdout, string Stderr)> RunAsync(string workDir, params string[] args) =>
        RunWithEnvironmentAsync(workDir, new Dictionary<string, string>(), args);

    /// <summary>Runs pathtrace with extra environment variables (e.g. PATHSERVICE_API_KEY).</summary>
    public static async Task<(int Code, string Stdout, string Stderr)> RunWithEnvironmentAsync(string workDir, IReadOnlyDictionary<string, string> environment, params string[] args)
    {
        var psi = new ProcessStartInfo("dotnet") { WorkingDirectory = workDir, RedirectStandardOutput = true, RedirectStandardError = true, UseShellExecute = false };
        psi.Environment.Remove("PATHSERVICE_API_KEY");
        foreach (var (k, v) in environment) psi.Environment[k] = v;
        psi.ArgumentList.Add(Dll);
        foreach (var a in args) psi.ArgumentList.Add(a);
        using var p = Process.Start(psi)!;
        var stdout = p.StandardOutput.ReadToEndAsync();
        var stderr = p.StandardError.ReadToEndAsync();
        using var cts = new CancellationTokenSource(TimeSpan.FromSeconds(120));
        await p.WaitForExitAsync(cts.Token);
        return (p.ExitCode, await stdout, await stderr);
    }
}

/// <summary>A real PathService instance on loopback with free ports (the server's own composition method).</summary>
internal sealed class ServerInstance : IAsyncDisposable
{
    public WebApplication App { get; }
    public string GrpcUrl { get; }
    public string HttpUrl { get; }
    private bool _stopped;
    private readonly CallCounter _calls;

    private ServerInstance(WebApplication app, CallCounter calls)
    {
        App = app;
        _calls = calls;
        var ep = app.Services.GetRequiredService<BoundEndpoints>();
        GrpcUrl = BoundEndpoints.UrlOf(ep.Grpc!, ep.Tls);
        HttpUrl = BoundEndpoints.UrlOf(ep.Http!, ep.Tls);
    }

    /// <param name="settings">Extra configuration keys below "PathService", e.g. "Limits:MaxNodes=2".</param>
    /// <param name="customize">Extra services (e.g. a gRPC interceptor) before the build.</param>
    public static async Task<ServerInstance> StartAsync(int slots, IEnumerable<string>? settings = null, Action<WebApplicationBuilder>? customize = null)
    {
        var calls = new CallCounter();
        var app = ServerHost.Build(["--PathService:ListenAddress=127.0.0.1", "--PathService:GrpcPort=0", "--PathService:HttpPort=0",
            $"--PathService:Limits:MaxConcurrentAnalyses={slots}", "--Serilog:MinimumLevel:Default=Warning",
            .. (settings ?? []).Select(s => "--PathService:" + s)],
            b =>
            {
                b.Services.AddSingleton<Microsoft.AspNetCore.Hosting.IStartupFilter>(new CountingFilter(calls));
                customize?.Invoke(b);
            });
        await app.StartAsync();
        return new ServerInstance(app, calls);
    }

    /// <summary>
    /// TracePath calls that reached this instance. Counted by a middleware of this host: the Prometheus scrape cannot
    /// tell the instances apart here, because the metrics listener of each host sees every same-named meter of the
    /// process (in production each pod is its own process).
    /// </summary>
    public int TraceCalls => Volatile.Read(ref _calls.TracePath);

    private sealed class CallCounter { public int TracePath; }

    private sealed class CountingFilter(CallCounter calls) : Microsoft.AspNetCore.Hosting.IStartupFilter
    {
        public Action<Microsoft.AspNetCore.Builder.IApplicationBuilder> Configure(Action<Microsoft.AspNetCore.Builder.IApplicationBuilder> next) => app =>
        {
            app.Use(async (ctx, nextMiddleware) =>
            {
                if (ctx.Request.Path == "/pathservice.v1.StructuralPathService/TracePath") Interlocked.Increment(ref calls.TracePath);
                await nextMiddleware(ctx);
            });
            next(app);
        };
    }

    public int ActiveAnalyses => App.Services.GetRequiredService<PathService.Server.Limits.AnalysisGate>().Active;

    /// <summary>Begins a shutdown's draining without stopping: health reports NOT_SERVING, new analyses get UNAVAILABLE.</summary>
    public Task DrainAsync() => App.Services.GetRequiredService<ShutdownCoordinator>().StoppingAsync(CancellationToken.None);

    /// <summary>Stops at once, as a killed pod does: open calls are aborted, not drained.</summary>
    public async Task KillAsync()
    {
        _stopped = true;
        await App.StopAsync(new CancellationToken(canceled: true));
    }

    public async ValueTask DisposeAsync()
    {
        if (!_stopped) await App.StopAsync();
        await App.DisposeAsync();
    }
}

internal static class Traces
{
    public static async Task<PathRecorder> RecordAsync(IAnalysisBackend backend, TracePathRequest request)
    {
        var rec = new PathRecorder();
        await foreach (var r in backend.TraceAsync(request, CancellationToken.None)) rec.Add(r);
        return rec;
    }

    /// <summary>
    /// The same path: every point, step cut and critical point equal value for value (compared through the Protobuf
    /// JSON form, where a -0 and a 0 are the same number), timings of the summary aside.
    /// </summary>
    public static void AssertSamePath(PathRecorder expected, PathRecorder actual, string what)
    {
        static List<string> Json<T>(IEnumerable<T> items) where T : Google.Protobuf.IMessage => items.Select(i => Google.Protobuf.JsonFormatter.Default.Format(i)).ToList();
        void Same<T>(List<T> e, List<T> a, string kind) where T : Google.Protobuf.IMessage
        {
            Assert.True(e.Count == a.Count, $"{what}: {a.Count} {kind}, expected {e.Count}");
            var (je, ja) = (Json(e), Json(a));
            for (int i = 0; i < je.Count; i++) Assert.True(je[i] == ja[i], $"{what}: {kind} {i} differs\n{je[i]}\n{ja[i]}");
        }
        Same(expected.Points, actual.Points, "points");
        Same(expected.Criticals, actual.Criticals, "critical points");
        Same(expected.Cuts, actual.Cuts, "step cuts");
        Assert.NotNull(actual.Summary);
        Assert.Equal(expected.Summary!.Reason, actual.Summary!.Reason);
        Assert.Equal(expected.Summary.Points, actual.Summary.Points);
        Assert.Equal(expected.Summary.Iterations, actual.Summary.Iterations);
        Assert.Equal(expected.Summary.MaxLoadFactor, actual.Summary.MaxLoadFactor);
    }
}

/// <summary>Invented structures built as requests.</summary>
internal static class Models
{
    /// <summary>Shallow two-bar truss traced by arc-length through both limit points.</summary>
    public static TracePathRequest TwoBarTruss()
    {
        var apexY = new DofRef { Node = "apex", Direction = Direction.Y };
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
        return new TracePathRequest
        {
            Model = m, LoadCase = new LoadCase { Reference = { new NodalLoad { Node = "apex", Fy = -10 } } },
            Controls = new SolverControls { Method = ContinuationMethod.ArcLength, InitialLoadIncrement = 0.5, MaxPoints = 400, TargetDisplacementDof = apexY, TargetDisplacement = -0.8, Monitored = { apexY } },
        };
    }

    /// <summary>
    /// A triangulated lattice cap over a square plan (side 30 m, rise 1.5 m), edges pinned, 1 kN down on every inner
    /// node, traced by arc-length with the full state on every point: a long stream of large messages.
    /// </summary>
    public static TracePathRequest LatticeCap(int cells, int points)
    {
        const double a = 15, f = 1.5;
        var m = new StructureModel { Name = $"lattice cap {cells}x{cells}", Units = new UnitLabels { Force = "kN", Length = "m" } };
        var loads = new LoadCase();
        string Id(int i, int j) => $"n{i}-{j}";
        for (int i = 0; i <= cells; i++)
            for (int j = 0; j <= cells; j++)
            {
                double x = -a + 2 * a * i / cells, y = -a + 2 * a * j / cells;
                m.Nodes.Add(new Node { Id = Id(i, j), X = x, Y = y, Z = f * (1 - x * x / (a * a)) * (1 - y * y / (a * a)) });
                if (i == 0 || j == 0 || i == cells || j == cells)
                    foreach (var d in new[] { Direction.X, Direction.Y, Direction.Z }) m.Supports.Add(new Support { Node = Id(i, j), Direction = d });
                else loads.Reference.Add(new NodalLoad { Node = Id(i, j), Fz = -1 });
            }
        int b = 0;
        void Bar(string s, string e) => m.Bars.Add(new Bar { Id = $"b{b++}", StartNode = s, EndNode = e, ElasticModulus = 2.1e8, Area = 2e-3 });
        for (int i = 0; i <= cells; i++)
            for (int j = 0; j <= cells; j++)
            {
                if (i < cells) Bar(Id(i, j), Id(i + 1, j));
                if (j < cells) Bar(Id(i, j), Id(i, j + 1));
                if (i < cells && j < cells) Bar(Id(i, j), Id(i + 1, j + 1));
            }
        var crown = new DofRef { Node = Id(cells / 2, cells / 2), Direction = Direction.Z };
        return new TracePathRequest
        {
            Model = m, LoadCase = loads,
            Controls = new SolverControls { Method = ContinuationMethod.ArcLength, InitialLoadIncrement = 5, MaxPoints = points, Monitored = { crown }, FullStateEvery = 1 },
        };
    }
}
