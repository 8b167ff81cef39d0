using System.Net;
using System.Security.Cryptography.X509Certificates;
using Microsoft.AspNetCore.Server.Kestrel.Core;
using Microsoft.Extensions.Diagnostics.HealthChecks;
using Microsoft.Extensions.Options;
using PathService.Server.Configuration;
using PathService.Server.Limits;
using PathService.Server.Security;
using PathService.Server.Services;
using PathService.Server.Telemetry;
using Serilog;

namespace PathService.Server.Hosting;

/// <summary>
/// Composition of the service: one method that builds the whole application, used by Program, the tests (which start
/// the real Kestrel server on loopback port 0) and the benchmark.
/// </summary>
public static class ServerHost
{
    /// <summary>Name under which the analysis service reports its health (besides the overall "").</summary>
    public const string HealthServiceName = "pathservice.v1.StructuralPathService";

    /// <param name="args">Command-line arguments; any configuration key may be given, e.g. <c>--PathService:GrpcPort=0</c>.</param>
    /// <param name="customize">Hook for tests: extra services (e.g. an in-memory metrics exporter) before the build.</param>
    public static WebApplication Build(string[] args, Action<WebApplicationBuilder>? customize = null)
    {
        var builder = WebApplication.CreateBuilder(args);
        var section = builder.Configuration.GetSection(PathServiceOptions.Section);
        var options = section.Get<PathServiceOptions>() ?? new PathServiceOptions();
        builder.Services.Configure<PathServiceOptions>(section);
        // One compute-thread budget per process, shared by every analysis (Limits:ComputeThreads, 0 = processor count).
        PathService.Engine.Sparse.ComputeBudget.Capacity = options.Limits.ComputeThreads > 0 ? options.Limits.ComputeThreads : Environment.ProcessorCount;

        // Refuse bad settings at start, each named, rather than clamping them or failing at the first call.
        var problems = OptionsValidation.RetiredKeyProblems(section);
        problems.AddRange(OptionsValidation.Problems(options, out var certificate));
        if (problems.Count > 0) throw new ConfigurationRefusedException(problems);
        var endpoints = new BoundEndpoints { Tls = certificate is not null };
        builder.Services.AddSingleton(endpoints);
        builder.WebHost.ConfigureKestrel(k =>
        {
            var ip = IPAddress.Parse(options.ListenAddress);
            k.Listen(ip, options.GrpcPort, l =>
            {
                endpoints.GrpcListen = l;
                if (certificate is null)
                {
                    // gRPC needs HTTP/2; without TLS there is no protocol negotiation, so this port speaks HTTP/2 only.
                    l.Protocols = HttpProtocols.Http2;
                }
                else
                {
                    l.Protocols = HttpProtocols.Http1AndHttp2; // ALPN picks h2 for gRPC clients
                    l.UseHttps(certificate);
                }
            });
            if (options.HttpPort >= 0)
                k.Listen(ip, options.HttpPort, l =>
                {
                    l.Protocols = HttpProtocols.Http1;
                    endpoints.HttpListen = l;
                    if (certificate is not null) l.UseHttps(certificate);
                });
        });
        // The host waits for the grace period (Shutdown:GraceSeconds) plus the 10 s cancellation wait and a margin before it gives up on stopping.
        builder.Services.Configure<HostOptions>(h => h.ShutdownTimeout = ShutdownTimeout(options.Shutdown.GraceSeconds));

        builder.AddPathServiceTelemetry(options.Telemetry);
        builder.Services.AddGrpc(o =>
            {
                o.EnableDetailedErrors = false;
                o.MaxReceiveMessageSize = options.Limits.MaxRequestBytes > 0 ? options.Limits.MaxRequestBytes : null;
                // Deny by default: one interceptor for every service (health and reflection included; CallPolicy keeps
                // its allow-list), so a service mapped later cannot run without authentication or the per-caller cap.
                o.Interceptors.Add<ApiKeyInterceptor>();
            })
            // The richer error details must be known to the JSON formatter, or an error with details becomes a 500.
            .AddJsonTranscoding(o => o.TypeRegistry = Google.Protobuf.Reflection.TypeRegistry.FromMessages(
                Google.Rpc.BadRequest.Descriptor, Google.Rpc.ErrorInfo.Descriptor, Google.Rpc.QuotaFailure.Descriptor, Google.Rpc.RetryInfo.Descriptor));
        if (options.EnableReflection) builder.Services.AddGrpcReflection();
        builder.Services.AddSingleton<ApiKeyAuthenticator>();
        builder.Services.AddSingleton<CallPolicy>();
        builder.Services.AddSingleton<CallerLimiter>();
        builder.Services.AddSingleton<ShutdownCoordinator>();
        builder.Services.AddHostedService(sp => sp.GetRequiredService<ShutdownCoordinator>());
        builder.Services.AddHealthChecks().AddCheck<ServingHealthCheck>("engine", tags: ["analysis"]);
        builder.Services.AddGrpcHealthChecks(o =>
        {
            o.Services.Map("", _ => true);
            o.Services.Map(HealthServiceName, r => r.Tags.Contains("analysis"));
        });
        builder.Services.AddSingleton<RequestLimits>();
        builder.Services.AddSingleton(sp => new PathService.Application.AnalysisApplication(sp.GetRequiredService<RequestLimits>().Analysis));
        builder.Services.AddSingleton(sp =>
        {
            var l = sp.GetRequiredService<IOptions<PathServiceOptions>>().Value.Limits;
            return new AnalysisGate(Math.Max(1, l.MaxConcurrentAnalyses), l.MaxQueuedAnalyses, TimeSpan.FromSeconds(Math.Max(0, l.QueueTimeoutSeconds)));
        });
        builder.Services.AddSingleton<TraceStreamer>();
        builder.Services.AddSingleton<AnalysisFrame>();

        customize?.Invoke(builder);

        var app = builder.Build();
        app.UseMiddleware<RequestIdMiddleware>();
        app.UseSerilogRequestLogging(o => o.GetLevel = RequestLogLevel);
        app.UseMiddleware<RequestMessageGuard>();
        app.UseMiddleware<JsonRequestGuard>();
        app.MapGrpcService<StructuralPathGrpcService>();
        app.MapGrpcService<ImperfectionSweepGrpcService>();
        app.MapGrpcHealthChecksService();
        if (options.EnableReflection) app.MapGrpcReflectionService();
        if (!string.IsNullOrWhiteSpace(options.Telemetry.HealthPath)) app.MapHealthChecks(options.Telemetry.HealthPath);
        app.MapPathServiceTelemetry(options.Telemetry);
        // Fail at start, not at the first call, when the API key configuration is malformed.
        _ = app.Services.GetRequiredService<ApiKeyAuthenticator>();
        // Instruments exist from the start: the meter provider first (so that it listens), then the service's meter,
        // which writes its zero-valued series on creation; a fresh pod's /metrics shows every gauge and counter.
        _ = app.Services.GetService<OpenTelemetry.Metrics.MeterProvider>();
        _ = app.Services.GetRequiredService<PathServiceTelemetry>();
        _ = app.Services.GetService<ExportFailureLog>();
        return app;
    }

    /// <summary>
    /// The host's shutdown timeout for a grace period of <paramref name="graceSeconds"/>: the grace period, then up to
    /// 10 s for cancelled analyses to let go, then 5 s for Kestrel to stop. It supersedes the .NET shutdownTimeoutSeconds
    /// setting; a pod's terminationGracePeriodSeconds must exceed it plus the preStop pause.
    /// </summary>
    public static TimeSpan ShutdownTimeout(double graceSeconds) => TimeSpan.FromSeconds(Math.Max(0, graceSeconds) + 15);

    /// <summary>
    /// Level of the one-line request log: a request the client aborted (during the upload or while the answer was
    /// streaming) is the client's doing and logged at Information whatever status Kestrel recorded; otherwise a 5xx
    /// or an exception is an Error.
    /// </summary>
    internal static Serilog.Events.LogEventLevel RequestLogLevel(HttpContext context, double elapsedMs, Exception? ex) =>
        context.RequestAborted.IsCancellationRequested ? Serilog.Events.LogEventLevel.Information
        : ex is not null || context.Response.StatusCode >= 500 ? Serilog.Events.LogEventLevel.Error
        : Serilog.Events.LogEventLevel.Information;

}

/// <summary>Healthy while the server accepts analyses; Unhealthy (NOT_SERVING) from the start of a shutdown.</summary>
public sealed class ServingHealthCheck(ShutdownCoordinator shutdown) : IHealthCheck
{
    public Task<HealthCheckResult> CheckHealthAsync(HealthCheckContext context, CancellationToken cancellationToken = default) =>
        Task.FromResult(shutdown.Draining ? HealthCheckResult.Unhealthy("shutting down") : HealthCheckResult.Healthy());
}
