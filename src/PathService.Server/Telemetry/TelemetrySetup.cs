using OpenTelemetry.Exporter;
using OpenTelemetry.Metrics;
using OpenTelemetry.Resources;
using OpenTelemetry.Trace;
using PathService.Server.Configuration;
using Serilog;
using Serilog.Formatting.Compact;

namespace PathService.Server.Telemetry;

/// <summary>Registration of metrics, traces and logs.</summary>
public static class TelemetrySetup
{
    public static void AddPathServiceTelemetry(this WebApplicationBuilder builder, TelemetryOptions options)
    {
        builder.Services.AddSingleton<PathServiceTelemetry>();

        // Structured JSON lines on stdout; levels come from the "Serilog" configuration section
        // (e.g. Serilog__MinimumLevel__Default=Debug). Sinks are fixed here so configuration cannot duplicate them.
        builder.Services.AddSerilog((_, lc) => lc
            .ReadFrom.Configuration(builder.Configuration)
            .Enrich.FromLogContext()
            .WriteTo.Console(new CompactJsonFormatter()));

        bool otlp = !string.IsNullOrWhiteSpace(options.OtlpEndpoint);
        if (otlp) builder.Services.AddSingleton<ExportFailureLog>();
        var otel = builder.Services.AddOpenTelemetry()
            .ConfigureResource(r => r.AddService(options.ServiceName))
            .WithMetrics(m =>
            {
                // "System.Runtime": the runtime's own meter (working set, GC heap, thread pool), for the load command and dashboards.
                m.AddMeter(PathServiceTelemetry.MeterName, "System.Runtime").AddAspNetCoreInstrumentation();
                if (!string.IsNullOrWhiteSpace(options.PrometheusPath)) m.AddPrometheusExporter();
                if (otlp)
                    m.AddOtlpExporter((o, reader) =>
                    {
                        o.Endpoint = new Uri(options.OtlpEndpoint);
                        reader.PeriodicExportingMetricReaderOptions.ExportIntervalMilliseconds = (int)(options.ExportIntervalSeconds * 1000);
                    });
            })
            .WithTracing(t =>
            {
                t.AddSource(PathServiceTelemetry.SourceName).AddAspNetCoreInstrumentation();
                if (otlp) t.AddOtlpExporter(o => o.Endpoint = new Uri(options.OtlpEndpoint));
            });
    }

    public static void MapPathServiceTelemetry(this WebApplication app, TelemetryOptions options)
    {
        if (!string.IsNullOrWhiteSpace(options.PrometheusPath)) app.MapPrometheusScrapingEndpoint(options.PrometheusPath);
    }
}
