using System.Net;
using System.Security.Cryptography.X509Certificates;

namespace PathService.Server.Configuration;

/// <summary>The server refuses to start: the problems found in its configuration, each naming its key.</summary>
public sealed class ConfigurationRefusedException(IReadOnlyList<string> problems)
    : Exception($"the configuration is not valid: {string.Join("; ", problems)}")
{
    /// <summary>Process exit code of a refused configuration (EX_CONFIG of sysexits.h).</summary>
    public const int ExitCode = 78;

    public IReadOnlyList<string> Problems { get; } = problems;
}

/// <summary>
/// Checks every setting at start and refuses bad values (rather than clamping them silently): ranges, ports,
/// addresses, paths, the TLS files (they must load), API key entries, and API keys over cleartext on an address
/// other than loopback (refused unless <see cref="SecurityOptions.AllowKeysOverCleartext"/>).
/// </summary>
public static class OptionsValidation
{
    private const string P = PathServiceOptions.Section + ":";

    /// <summary>Every problem, each naming its configuration key; empty when the options are valid. Loads the TLS certificate when one is configured.</summary>
    public static List<string> Problems(PathServiceOptions o, out X509Certificate2? certificate)
    {
        var problems = new List<string>();
        void Need(bool ok, string key, string what) { if (!ok) problems.Add($"{P}{key} {what}"); }

        bool ipOk = IPAddress.TryParse(o.ListenAddress, out var ip);
        Need(ipOk, "ListenAddress", $"is '{LogText.Cut(o.ListenAddress)}'; it must be an IP address such as 0.0.0.0 or 127.0.0.1");
        Need(o.GrpcPort is >= 0 and <= 65535, "GrpcPort", $"is {o.GrpcPort}; it must be 0 (a free port) to 65535");
        Need(o.HttpPort is >= -1 and <= 65535, "HttpPort", $"is {o.HttpPort}; it must be -1 (off), 0 (a free port) or up to 65535");
        Need(o.GrpcPort == 0 || o.GrpcPort != o.HttpPort, "HttpPort", $"is the gRPC port {o.GrpcPort}; the two endpoints need different ports");

        var l = o.Limits;
        Need(l.MaxNodes >= 1, "Limits:MaxNodes", $"is {l.MaxNodes}; it must be at least 1");
        Need(l.MaxBars >= 1, "Limits:MaxBars", $"is {l.MaxBars}; it must be at least 1");
        Need(l.MaxSprings >= 0, "Limits:MaxSprings", $"is {l.MaxSprings}; it must be 0 (no springs accepted) or more");
        Need(l.MaxPoints >= 1, "Limits:MaxPoints", $"is {l.MaxPoints}; it must be at least 1");
        Need(l.MaxConcurrentAnalyses >= 1, "Limits:MaxConcurrentAnalyses", $"is {l.MaxConcurrentAnalyses}; it must be at least 1");
        Need(double.IsFinite(l.RetryAfterSeconds) && l.RetryAfterSeconds > 0, "Limits:RetryAfterSeconds", $"is {l.RetryAfterSeconds}; it must be a positive number of seconds");
        Need(l.MaxBucklingModes >= 1, "Limits:MaxBucklingModes", $"is {l.MaxBucklingModes}; it must be at least 1");
        Need(double.IsFinite(l.MaxTraceSeconds) && l.MaxTraceSeconds >= 0, "Limits:MaxTraceSeconds", $"is {l.MaxTraceSeconds}; it must be 0 (none) or a positive number of seconds");
        Need(l.MaxRequestBytes >= 1024, "Limits:MaxRequestBytes", $"is {l.MaxRequestBytes}; it must be at least 1024 bytes");
        Need(l.MaxQueuedAnalyses >= 0, "Limits:MaxQueuedAnalyses", $"is {l.MaxQueuedAnalyses}; it must be 0 (no queue) or more");
        Need(double.IsFinite(l.QueueTimeoutSeconds) && l.QueueTimeoutSeconds >= 0, "Limits:QueueTimeoutSeconds", $"is {l.QueueTimeoutSeconds}; it must be 0 or a positive number of seconds");
        Need(double.IsFinite(l.MaxAnalysisMemoryMiB) && l.MaxAnalysisMemoryMiB >= 0, "Limits:MaxAnalysisMemoryMiB", $"is {l.MaxAnalysisMemoryMiB}; it must be 0 (none) or a positive number of MiB");
        Need(l.MaxConcurrentAnalysesPerCaller >= 0, "Limits:MaxConcurrentAnalysesPerCaller", $"is {l.MaxConcurrentAnalysesPerCaller}; it must be 0 (none) or more");
        Need(double.IsFinite(o.Shutdown.GraceSeconds) && o.Shutdown.GraceSeconds >= 0 && o.Shutdown.GraceSeconds <= 3600, "Shutdown:GraceSeconds", $"is {o.Shutdown.GraceSeconds}; it must be 0 to 3600 seconds");

        var t = o.Telemetry;
        Need(string.IsNullOrWhiteSpace(t.OtlpEndpoint) || Uri.TryCreate(t.OtlpEndpoint, UriKind.Absolute, out var u) && u.Scheme is "http" or "https",
            "Telemetry:OtlpEndpoint", $"is '{LogText.Cut(t.OtlpEndpoint)}'; it must be empty or an absolute http(s) URL");
        Need(string.IsNullOrEmpty(t.PrometheusPath) || t.PrometheusPath.StartsWith('/'), "Telemetry:PrometheusPath", $"is '{LogText.Cut(t.PrometheusPath)}'; it must be empty (off) or start with '/'");
        Need(string.IsNullOrEmpty(t.HealthPath) || t.HealthPath.StartsWith('/'), "Telemetry:HealthPath", $"is '{LogText.Cut(t.HealthPath)}'; it must be empty (off) or start with '/'");
        Need(string.IsNullOrEmpty(t.PrometheusPath) || t.PrometheusPath != t.HealthPath, "Telemetry:HealthPath", "is the Prometheus path; the two need different paths");
        Need(double.IsFinite(t.ExportIntervalSeconds) && t.ExportIntervalSeconds >= 0.1 && t.ExportIntervalSeconds <= 3600, "Telemetry:ExportIntervalSeconds", $"is {t.ExportIntervalSeconds}; it must be 0.1 to 3600 seconds");
        Need(!string.IsNullOrWhiteSpace(t.ServiceName), "Telemetry:ServiceName", "is empty");

        var keys = o.Security.ApiKeys;
        Need(!string.IsNullOrWhiteSpace(keys.Header) && keys.Header.All(c => char.IsAsciiLetterOrDigit(c) || c is '-' or '_' or '.'),
            "Security:ApiKeys:Header", $"is '{LogText.Cut(keys.Header)}'; it must be a header name (letters, digits, '-', '_', '.')");
        for (int i = 0; i < keys.Keys.Count; i++)
        {
            var k = keys.Keys[i];
            string key = $"Security:ApiKeys:Keys:{i}";
            bool plain = !string.IsNullOrEmpty(k.Key), digest = !string.IsNullOrEmpty(k.KeySha256);
            Need(plain || digest, key, "has neither Key nor KeySha256");
            Need(!(plain && digest), key, "has both Key and KeySha256; give one");
            if (digest)
                Need(k.KeySha256.Trim().Length == 64 && k.KeySha256.Trim().All(char.IsAsciiHexDigit), key + ":KeySha256", "is not a SHA-256 digest (64 hexadecimal digits)");
            Need(k.MaxConcurrentAnalyses >= 0, key + ":MaxConcurrentAnalyses", $"is {k.MaxConcurrentAnalyses}; it must be 0 (the server default) or more");
        }
        var names = keys.Keys.Select((k, i) => string.IsNullOrWhiteSpace(k.Name) ? $"key{i}" : k.Name).ToList();
        foreach (var dup in names.GroupBy(n => n, StringComparer.Ordinal).Where(g => g.Count() > 1))
            problems.Add($"{P}Security:ApiKeys:Keys: the caller name '{LogText.Cut(dup.Key)}' is given {dup.Count()} times; per-caller limits need distinct names");

        certificate = null;
        var tls = o.Security.Tls;
        if (tls.Enabled)
        {
            if (!File.Exists(tls.CertificatePath))
                problems.Add($"{P}Security:Tls:CertificatePath: no file '{LogText.Cut(tls.CertificatePath, 200)}'");
            else if (!string.IsNullOrWhiteSpace(tls.KeyPath) && !File.Exists(tls.KeyPath))
                problems.Add($"{P}Security:Tls:KeyPath: no file '{LogText.Cut(tls.KeyPath, 200)}'");
            else
            try { certificate = LoadCertificate(tls); }
            catch (Exception ex)
            {
                // The message names the file or the format problem; it never holds the password.
                problems.Add($"{P}Security:Tls:CertificatePath '{LogText.Cut(tls.CertificatePath, 200)}' could not be loaded{(string.IsNullOrWhiteSpace(tls.KeyPath) ? "" : $" with key '{LogText.Cut(tls.KeyPath, 200)}'")}: {ex.GetType().Name}: {LogText.Cut(ex.Message, 300)}");
            }
        }
        else if (!string.IsNullOrWhiteSpace(tls.KeyPath))
            problems.Add($"{P}Security:Tls:KeyPath is set but Security:Tls:CertificatePath is empty");

        if (keys.Enabled && !tls.Enabled && ipOk && !IPAddress.IsLoopback(ip!) && !o.Security.AllowKeysOverCleartext)
            problems.Add($"{P}Security:ApiKeys are configured but the server listens on {ip} without TLS: keys would cross the network in clear text. " +
                         $"Configure Security:Tls, listen on loopback, or set {P}Security:AllowKeysOverCleartext=true (e.g. behind a TLS-terminating proxy or mesh)");
        return problems;
    }

    /// <summary>
    /// Keys renamed in contract v1, with their new names. A retired key that is still set is refused rather than
    /// ignored: an old manifest's PathService__Port=6000 would otherwise leave the server on the default port.
    /// </summary>
    public static readonly IReadOnlyDictionary<string, string> RetiredKeys = new Dictionary<string, string>
    {
        ["Port"] = "GrpcPort",
    };

    /// <summary>One problem per retired key still present in the "PathService" section.</summary>
    public static List<string> RetiredKeyProblems(Microsoft.Extensions.Configuration.IConfiguration section) =>
        RetiredKeys.Where(k => section[k.Key] is not null)
            .Select(k => $"{P}{k.Key} is no longer read; it was renamed {P}{k.Value} (environment variable {PathServiceOptions.Section}__{k.Value.Replace(":", "__")})")
            .ToList();

    /// <summary>PKCS#12 (with an optional password) or a PEM certificate with its PEM key.</summary>
    public static X509Certificate2 LoadCertificate(TlsOptions tls)
    {
        if (!string.IsNullOrWhiteSpace(tls.KeyPath))
            return X509Certificate2.CreateFromPemFile(tls.CertificatePath, tls.KeyPath);
        return X509CertificateLoader.LoadPkcs12FromFile(tls.CertificatePath, string.IsNullOrEmpty(tls.CertificatePassword) ? null : tls.CertificatePassword);
    }
}
