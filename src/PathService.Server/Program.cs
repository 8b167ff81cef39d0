using PathService.Server.Configuration;
using PathService.Server.Hosting;
using Serilog;
using Serilog.Formatting.Compact;

// Entry point: everything is composed in ServerHost so that tests and the benchmark run the very same server.
// A configuration that is refused, or a start that fails (a port in use, say), ends the process with one JSON log
// line on standard output (the format of every other line) and a distinct exit code, never a plain-text stack.
WebApplication app;
try
{
    app = ServerHost.Build(args);
}
catch (ConfigurationRefusedException ex)
{
    using var log = StartupLog();
    foreach (var problem in ex.Problems) log.Fatal("Configuration refused: {Problem}", problem);
    log.Fatal("PathService not started: {ProblemCount} configuration problems; exit code {ExitCode}", ex.Problems.Count, ConfigurationRefusedException.ExitCode);
    return ConfigurationRefusedException.ExitCode;
}
catch (Exception ex)
{
    using var log = StartupLog();
    log.Fatal(ex, "PathService could not be built: {ExceptionType}; exit code {ExitCode}", ex.GetType().Name, StartFailedExitCode);
    return StartFailedExitCode;
}

app.Lifetime.ApplicationStarted.Register(() =>
{
    // Say which port is which: with port 0 the numbers are only known now.
    var ep = app.Services.GetRequiredService<BoundEndpoints>();
    app.Logger.LogInformation("PathService ready: gRPC {GrpcUrl}, HTTP/1.1 {HttpUrl}",
        ep.Grpc is { } g ? BoundEndpoints.UrlOf(g, ep.Tls) : "-", ep.Http is { } h ? BoundEndpoints.UrlOf(h, ep.Tls) : "disabled");
});
try
{
    await app.RunAsync();
    return 0;
}
catch (Exception ex)
{
    // e.g. the port is taken: the host's own logger may already be gone, so write the line directly.
    using var log = StartupLog();
    log.Fatal(ex, "PathService stopped on a start or run failure: {ExceptionType}; exit code {ExitCode}", ex.GetType().Name, StartFailedExitCode);
    return StartFailedExitCode;
}

/// <summary>Marker for tooling that looks for the entry assembly's Program type.</summary>
public partial class Program
{
    /// <summary>Exit code when the server cannot start for a reason other than its configuration (EX_SOFTWARE of sysexits.h).</summary>
    public const int StartFailedExitCode = 70;

    /// <summary>A logger for the lines written before (or after) the host's own: same JSON format, standard output.</summary>
    private static Serilog.Core.Logger StartupLog() => new LoggerConfiguration().WriteTo.Console(new CompactJsonFormatter()).CreateLogger();
}
