namespace PathService.Server.Configuration;

/// <summary>
/// Settings of the service, bound from the "PathService" configuration section (appsettings.json, then environment
/// variables such as <c>PathService__Port</c> or <c>PathService__Limits__MaxBars</c>, then command-line arguments).
/// </summary>
public sealed class PathServiceOptions
{
    public const string Section = "PathService";

    /// <summary>Address Kestrel listens on. 0.0.0.0 for every interface, 127.0.0.1 for loopback only.</summary>
    public string ListenAddress { get; set; } = "0.0.0.0";

    /// <summary>Port of the gRPC endpoint (HTTP/2 cleartext, prior knowledge). 0 picks a free port.</summary>
    public int Port { get; set; } = 5180;

    /// <summary>
    /// Port of the HTTP/1.1 endpoint for JSON transcoding and the Prometheus scrape; -1 disables it, 0 picks a free port.
    /// A second endpoint is needed because cleartext HTTP/2 cannot share a port with HTTP/1.1 clients in Kestrel.
    /// </summary>
    public int HttpPort { get; set; } = 5181;

    public LimitOptions Limits { get; set; } = new();
    public TelemetryOptions Telemetry { get; set; } = new();
}

/// <summary>Protective limits; a request beyond them gets RESOURCE_EXHAUSTED.</summary>
public sealed class LimitOptions
{
    public int MaxNodes { get; set; } = 20_000;
    public int MaxBars { get; set; } = 60_000;
    /// <summary>Upper bound of controls.max_points; also the default when the caller leaves it unset and it is below 100.</summary>
    public int MaxPoints { get; set; } = 5_000;
    /// <summary>Analyses (trace, linear, buckling) running at once; the machine's cores are the natural choice.</summary>
    public int MaxConcurrentAnalyses { get; set; } = 2;
    /// <summary>Retry delay suggested to a caller turned away because every analysis slot is busy.</summary>
    public double RetryAfterSeconds { get; set; } = 2;
    /// <summary>Largest mode_count of FindBucklingModes.</summary>
    public int MaxBucklingModes { get; set; } = 20;
    /// <summary>Wall-time cap of one trace in seconds (0 = none); a caller's smaller wall_time_limit wins.</summary>
    public double MaxTraceSeconds { get; set; } = 600;
}

/// <summary>Telemetry endpoints.</summary>
public sealed class TelemetryOptions
{
    /// <summary>OTLP collector endpoint (e.g. http://collector:4317); empty turns the OTLP exporter off.</summary>
    public string OtlpEndpoint { get; set; } = "";
    /// <summary>Path of the Prometheus scrape endpoint on the HTTP/1.1 port; empty turns it off.</summary>
    public string PrometheusPath { get; set; } = "/metrics";
    /// <summary>service.name resource attribute of traces and metrics.</summary>
    public string ServiceName { get; set; } = "pathservice";
}
