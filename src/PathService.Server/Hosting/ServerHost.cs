using System.Net;
using Microsoft.AspNetCore.Server.Kestrel.Core;
using Microsoft.Extensions.Diagnostics.HealthChecks;
using Microsoft.Extensions.Options;
using PathService.Server.Configuration;
using PathService.Server.Limits;
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

    /// <param name="args">Command-line arguments; any configuration key may be given, e.g. <c>--PathService:Port=0</c>.</param>
    /// <param name="customize">Hook for tests: extra services (e.g. an in-memory metrics exporter) before the build.</param>
    public static WebApplication Build(string[] args, Action<WebApplicationBuilder>? customize = null)
    {
        var builder = WebApplication.CreateBuilder(args);
        var section = builder.Configuration.GetSection(PathServiceOptions.Section);
        var options = section.Get<PathServiceOptions>() ?? new PathServiceOptions();
        builder.Services.Configure<PathServiceOptions>(section);

        var endpoints = new BoundEndpoints();
        builder.Services.AddSingleton(endpoints);
        builder.WebHost.ConfigureKestrel(k =>
        {
            var ip = IPAddress.Parse(options.ListenAddress);
            // gRPC needs HTTP/2; without TLS there is no protocol negotiation, so this port speaks HTTP/2 only.
            k.Listen(ip, options.Port, l => { l.Protocols = HttpProtocols.Http2; endpoints.GrpcListen = l; });
            if (options.HttpPort >= 0)
                k.Listen(ip, options.HttpPort, l => { l.Protocols = HttpProtocols.Http1; endpoints.HttpListen = l; });
        });

        builder.AddPathServiceTelemetry(options.Telemetry);
        builder.Services.AddGrpc(o => o.EnableDetailedErrors = false).AddJsonTranscoding();
        builder.Services.AddGrpcReflection();
        builder.Services.AddHealthChecks().AddCheck("engine", () => HealthCheckResult.Healthy(), tags: ["analysis"]);
        builder.Services.AddGrpcHealthChecks(o =>
        {
            o.Services.Map("", _ => true);
            o.Services.Map(HealthServiceName, r => r.Tags.Contains("analysis"));
        });
        builder.Services.AddSingleton<RequestLimits>();
        builder.Services.AddSingleton(sp => new AnalysisGate(Math.Max(1, sp.GetRequiredService<IOptions<PathServiceOptions>>().Value.Limits.MaxConcurrentAnalyses)));
        builder.Services.AddSingleton<TraceStreamer>();

        customize?.Invoke(builder);

        var app = builder.Build();
        app.UseMiddleware<RequestIdMiddleware>();
        app.UseSerilogRequestLogging();
        app.MapGrpcService<StructuralPathGrpcService>();
        app.MapGrpcService<ImperfectionStudyGrpcService>();
        app.MapGrpcHealthChecksService();
        app.MapGrpcReflectionService();
        app.MapPathServiceTelemetry(options.Telemetry);
        return app;
    }
}
