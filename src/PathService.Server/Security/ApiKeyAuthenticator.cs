using System.Security.Cryptography;
using System.Text;
using Microsoft.Extensions.Options;
using PathService.Server.Configuration;

namespace PathService.Server.Security;

/// <summary>A caller known to the server. <see cref="Anonymous"/> when authentication is off.</summary>
public sealed record Caller(string Name, int MaxConcurrentAnalyses)
{
    public static readonly Caller Anonymous = new("anonymous", 0);
}

public enum KeyCheck { Accepted, Missing, Rejected }

/// <summary>
/// Checks presented API keys. Keys are held only as SHA-256 digests and compared in constant time, so neither the
/// configuration object kept in memory after start nor a timing side channel gives a key away.
/// </summary>
public sealed class ApiKeyAuthenticator
{
    private readonly (byte[] Digest, Caller Caller)[] _keys;

    public ApiKeyAuthenticator(IOptions<PathServiceOptions> options)
    {
        var o = options.Value;
        Header = o.Security.ApiKeys.Header.ToLowerInvariant();
        _keys = o.Security.ApiKeys.Keys.Select((k, i) =>
        {
            byte[] digest = !string.IsNullOrEmpty(k.Key) ? Digest(k.Key)
                : !string.IsNullOrEmpty(k.KeySha256) ? Convert.FromHexString(k.KeySha256.Trim())
                : throw new InvalidOperationException($"PathService:Security:ApiKeys:Keys:{i} has neither Key nor KeySha256");
            if (digest.Length != 32) throw new InvalidOperationException($"PathService:Security:ApiKeys:Keys:{i}:KeySha256 is not a SHA-256 digest in hex");
            string name = string.IsNullOrWhiteSpace(k.Name) ? $"key{i}" : k.Name;
            return (digest, new Caller(name, k.MaxConcurrentAnalyses > 0 ? k.MaxConcurrentAnalyses : o.Limits.MaxConcurrentAnalysesPerCaller));
        }).ToArray();
    }

    public bool Enabled => _keys.Length > 0;
    public string Header { get; }

    public KeyCheck Check(string? presented, out Caller? caller)
    {
        caller = null;
        if (string.IsNullOrEmpty(presented)) return KeyCheck.Missing;
        var digest = Digest(presented);
        // Every entry is compared, whether or not an earlier one matched: the time taken does not depend on which key matched.
        foreach (var (d, c) in _keys)
            if (CryptographicOperations.FixedTimeEquals(d, digest)) caller ??= c;
        return caller is null ? KeyCheck.Rejected : KeyCheck.Accepted;
    }

    public static byte[] Digest(string key) => SHA256.HashData(Encoding.UTF8.GetBytes(key));
}
