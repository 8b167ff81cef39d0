namespace PathService.Client.Calls;

/// <summary>How to reach PathService: one or more addresses, an API key and the certificate authority to trust.</summary>
public sealed record ConnectionOptions
{
    /// <summary>Server addresses (http:// or https://); several are balanced round-robin, as behind a headless Kubernetes Service.</summary>
    public required IReadOnlyList<Uri> Addresses { get; init; }

    /// <summary>The caller's API key, sent in <see cref="ApiKeyHeader"/> on every call; null when the server has no keys.</summary>
    public string? ApiKey { get; init; }

    /// <summary>Metadata header that carries the key (the server's Security:ApiKeys:Header; default "x-api-key").</summary>
    public string ApiKeyHeader { get; init; } = "x-api-key";

    /// <summary>PEM file of a certificate authority to trust for https addresses besides the system's own (a private CA).</summary>
    public string? CertificateAuthorityFile { get; init; }

    /// <summary>How often a trace dropped with UNAVAILABLE, or a unary call refused with it, is retried on another instance.</summary>
    public int Retries { get; init; } = 3;

    /// <summary>
    /// Where the connection reports what it does about failing instances ("skipping …", "retrying …"), e.g. a
    /// command-line tool's standard error; null = silent.
    /// </summary>
    public Action<string>? Notice { get; init; }

    /// <summary>Service name whose gRPC health decides whether an instance takes a restarted trace.</summary>
    public string HealthService { get; init; } = "pathservice.v1.StructuralPathService";

    /// <summary>How long a health check before a retry may take before the instance is skipped.</summary>
    public TimeSpan HealthCheckTimeout { get; init; } = TimeSpan.FromSeconds(3);

    /// <summary>Largest response accepted (full states of large models are big).</summary>
    public int MaxReceiveMessageBytes { get; init; } = 64 * 1024 * 1024;

    /// <summary>Parses a comma-separated address list.</summary>
    public static IReadOnlyList<Uri> ParseAddresses(string addresses)
    {
        var list = addresses.Split(',', StringSplitOptions.RemoveEmptyEntries | StringSplitOptions.TrimEntries).Select(a =>
            Uri.TryCreate(a, UriKind.Absolute, out var u) && (u.Scheme == "http" || u.Scheme == "https")
                ? u : throw new ArgumentException($"'{a}' is not an http:// or https:// address")).ToList();
        return list.Count > 0 ? list : throw new ArgumentException("no server address given");
    }
}
