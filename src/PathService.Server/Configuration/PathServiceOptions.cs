namespace PathService.Server.Configuration;

/// <summary>
/// Settings of the service, bound from the "PathService" configuration section (appsettings.json, then environment
/// variables such as <c>PathService__GrpcPort</c> or <c>PathService__Limits__MaxBars</c>, then command-line arguments).
/// </summary>
public sealed class PathServiceOptions
{
    public const string Section = "PathService";

    /// <summary>Address Kestrel listens on. 0.0.0.0 for every interface, 127.0.0.1 for loopback only.</summary>
    public string ListenAddress { get; set; } = "0.0.0.0";

    /// <summary>
    /// Port of the gRPC endpoint (HTTP/2 cleartext, prior knowledge; HTTP/2 by ALPN with TLS). 0 picks a free port.
    /// Named for its protocol beside <see cref="HttpPort"/>; the key was <c>Port</c> before contract v1, which is refused.
    /// </summary>
    public int GrpcPort { get; set; } = 5180;

    /// <summary>
    /// Port of the HTTP/1.1 endpoint for JSON transcoding and the Prometheus scrape; -1 disables it, 0 picks a free port.
    /// A second endpoint is needed because cleartext HTTP/2 cannot share a port with HTTP/1.1 clients in Kestrel.
    /// </summary>
    public int HttpPort { get; set; } = 5181;

    public LimitOptions Limits { get; set; } = new();
    public TelemetryOptions Telemetry { get; set; } = new();
    public SecurityOptions Security { get; set; } = new();
    public ShutdownOptions Shutdown { get; set; } = new();

    /// <summary>Server reflection (schema discovery for grpcurl and similar tools). It reveals the public contract only.</summary>
    public bool EnableReflection { get; set; } = true;
}

/// <summary>Protective limits; a request beyond them gets RESOURCE_EXHAUSTED.</summary>
/// <remarks>The defaults of the limits that are properties of the request are the application layer's
/// (<see cref="PathService.Application.AnalysisLimits.Default"/>), which the CLI's in-process backend uses too.</remarks>
public sealed class LimitOptions
{
    public int MaxNodes { get; set; } = PathService.Application.AnalysisLimits.Default.MaxNodes;
    public int MaxBars { get; set; } = PathService.Application.AnalysisLimits.Default.MaxBars;
    /// <summary>Largest number of springs (ground springs plus link springs) in one model; springs are not counted against <see cref="MaxBars"/>.</summary>
    public int MaxSprings { get; set; } = PathService.Application.AnalysisLimits.Default.MaxSprings;
    /// <summary>Upper bound of controls.max_points; also the default when the caller leaves it unset and it is below 100.</summary>
    public int MaxPoints { get; set; } = PathService.Application.AnalysisLimits.Default.MaxPoints;
    /// <summary>Analyses (trace, linear, buckling) running at once; the machine's cores are the natural choice.</summary>
    public int MaxConcurrentAnalyses { get; set; } = 2;
    /// <summary>Retry delay suggested to a caller turned away because every analysis slot is busy.</summary>
    public double RetryAfterSeconds { get; set; } = 2;
    /// <summary>Largest mode_count of FindBucklingModes.</summary>
    public int MaxBucklingModes { get; set; } = PathService.Application.AnalysisLimits.Default.MaxBucklingModes;
    /// <summary>
    /// Wall-time cap of one trace, and of one AnalyzeLinear or FindBucklingModes call, in seconds (0 = none); a caller's
    /// smaller wall_time_limit wins. The call holds its slot at most this long plus a short margin (5 %, 1 to 5 s), blocked writes included.
    /// </summary>
    public double MaxTraceSeconds { get; set; } = 600;
    /// <summary>Largest accepted request message in bytes (Kestrel's gRPC MaxReceiveMessageSize); beyond it RESOURCE_EXHAUSTED.</summary>
    public int MaxRequestBytes { get; set; } = 16 * 1024 * 1024;
    /// <summary>Callers waiting for a free analysis slot; one more is refused at once with RESOURCE_EXHAUSTED and RetryInfo. 0 = no queue.</summary>
    public int MaxQueuedAnalyses { get; set; } = 8;
    /// <summary>Longest wait in the queue, in seconds; then RESOURCE_EXHAUSTED with RetryInfo.</summary>
    public double QueueTimeoutSeconds { get; set; } = 10;
    /// <summary>Memory budget of one analysis in MiB, estimated from the model before anything is factorised (0 = none).</summary>
    public double MaxAnalysisMemoryMiB { get; set; } = PathService.Application.AnalysisLimits.Default.MaxAnalysisMemoryMiB;
    /// <summary>Default number of analyses one caller (API key) may run at once; 0 = no per-caller cap. A key may override it.</summary>
    public int MaxConcurrentAnalysesPerCaller { get; set; }
    /// <summary>
    /// Wall-time cap of one SweepImperfections call as a whole, in seconds (0 = none). Each trace of the sweep gets what
    /// is left of it; amplitudes not reached are reported with STOP_REASON_WALL_TIME_EXCEEDED and no points.
    /// </summary>
    public double MaxSweepSeconds { get; set; } = 600;
    /// <summary>
    /// Longest wait, in seconds, for a caller to accept one streamed response (HTTP/2 flow control) before the call is
    /// ended with ABORTED and its slot freed (0 = only the call's time limit bounds the wait).
    /// </summary>
    public double StalledWriteSeconds { get; set; } = 30;
    /// <summary>
    /// Compute threads all analyses share (0 = the processor count): each running analysis uses one, and the parallel
    /// parts of the engine borrow helpers from what is left.
    /// </summary>
    public int ComputeThreads { get; set; }
}

/// <summary>Transport security and caller authentication.</summary>
public sealed class SecurityOptions
{
    public TlsOptions Tls { get; set; } = new();
    public ApiKeyOptions ApiKeys { get; set; } = new();
    /// <summary>
    /// API keys over cleartext on an address other than loopback are refused at start, since the keys would cross the
    /// network readable; set true only where the traffic is encrypted outside the process (a TLS-terminating proxy, a mesh).
    /// </summary>
    public bool AllowKeysOverCleartext { get; set; }
}

/// <summary>
/// TLS on the gRPC port (and on the HTTP/1.1 port too). Either a PKCS#12 file (<see cref="CertificatePath"/> with an
/// optional <see cref="CertificatePassword"/>) or a PEM pair (<see cref="CertificatePath"/> ending in .pem/.crt plus
/// <see cref="KeyPath"/>). Empty path = cleartext. With TLS the gRPC port negotiates HTTP/2 by ALPN.
/// </summary>
public sealed class TlsOptions
{
    public string CertificatePath { get; set; } = "";
    /// <summary>Password of the PKCS#12 file; give it through the environment (PathService__Security__Tls__CertificatePassword), never in a checked-in file.</summary>
    public string CertificatePassword { get; set; } = "";
    public string KeyPath { get; set; } = "";
    public bool Enabled => !string.IsNullOrWhiteSpace(CertificatePath);
}

/// <summary>
/// API keys presented in a request header. With no key configured, authentication is off. The analysis RPCs need a
/// key; health, metrics and reflection do not.
/// </summary>
public sealed class ApiKeyOptions
{
    /// <summary>Header carrying the key (lower case, as gRPC metadata keys are).</summary>
    public string Header { get; set; } = "x-api-key";
    public List<ApiKeyEntry> Keys { get; set; } = [];
    public bool Enabled => Keys.Count > 0;
}

/// <summary>One caller. Give the key itself (<see cref="Key"/>, e.g. from a secret store through the environment) or only its SHA-256 in hex (<see cref="KeySha256"/>).</summary>
public sealed class ApiKeyEntry
{
    /// <summary>Caller name used in logs and metrics; never the key.</summary>
    public string Name { get; set; } = "";
    public string Key { get; set; } = "";
    public string KeySha256 { get; set; } = "";
    /// <summary>Analyses this caller may run at once; 0 = the server default (<see cref="LimitOptions.MaxConcurrentAnalysesPerCaller"/>).</summary>
    public int MaxConcurrentAnalyses { get; set; }
}

/// <summary>Graceful shutdown.</summary>
public sealed class ShutdownOptions
{
    /// <summary>
    /// The grace period, in seconds: on stop, health turns NOT_SERVING and new analyses are refused with UNAVAILABLE;
    /// running analyses get this long to finish, then they are cancelled. The host's shutdown timeout is the grace
    /// period plus 15 s, and a pod's terminationGracePeriodSeconds must exceed that plus its preStop pause.
    /// </summary>
    public double GraceSeconds { get; set; } = 20;
}

/// <summary>Telemetry endpoints.</summary>
public sealed class TelemetryOptions
{
    /// <summary>OTLP collector endpoint (e.g. http://collector:4317); empty turns the OTLP exporter off.</summary>
    public string OtlpEndpoint { get; set; } = "";
    /// <summary>Path of the Prometheus scrape endpoint on the HTTP/1.1 port; empty turns it off.</summary>
    public string PrometheusPath { get; set; } = "/metrics";
    /// <summary>Path of the plain HTTP health endpoint (200 Healthy / 503 Unhealthy), open without authentication; empty turns it off. gRPC health is always on the gRPC port.</summary>
    public string HealthPath { get; set; } = "/healthz";
    /// <summary>Interval of the OTLP metric export in seconds (the SDK's default is 60).</summary>
    public double ExportIntervalSeconds { get; set; } = 60;
    /// <summary>service.name resource attribute of traces and metrics.</summary>
    public string ServiceName { get; set; } = "pathservice";
}
