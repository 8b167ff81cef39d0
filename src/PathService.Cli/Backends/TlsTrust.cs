using System.Net.Security;
using System.Security.Authentication;
using System.Security.Cryptography.X509Certificates;
using Grpc.Core;

namespace PathService.Cli.Backends;

/// <summary>
/// Trust in a server certificate issued by a private certificate authority (--ca-file): the server's chain must end at
/// that CA (and only that CA), and the certificate must name the host the client connected to.
/// </summary>
internal static class TlsTrust
{
    /// <summary>Loads the CA certificate (PEM or DER); a missing or unreadable file is an input error.</summary>
    public static X509Certificate2 LoadCa(string path)
    {
        if (!File.Exists(path)) throw new InputException($"{path}: CA certificate file not found");
        try { return X509CertificateLoader.LoadCertificateFromFile(path); }
        catch (Exception ex) when (ex is System.Security.Cryptography.CryptographicException or IOException)
        {
            throw new InputException($"{path}: not a readable CA certificate (PEM or DER): {ex.Message}");
        }
    }

    /// <summary>True when the certificate chains to <paramref name="ca"/> and names the host (no name mismatch).</summary>
    public static bool Validate(X509Certificate? presented, SslPolicyErrors errors, X509Certificate2 ca)
    {
        if (presented is null || (errors & (SslPolicyErrors.RemoteCertificateNameMismatch | SslPolicyErrors.RemoteCertificateNotAvailable)) != 0) return false;
        using var cert = new X509Certificate2(presented);
        using var chain = new X509Chain();
        chain.ChainPolicy.TrustMode = X509ChainTrustMode.CustomRootTrust;
        chain.ChainPolicy.CustomTrustStore.Add(ca);
        chain.ChainPolicy.RevocationMode = X509RevocationMode.NoCheck; // a private CA rarely publishes revocation lists
        return chain.Build(cert);
    }

    /// <summary>Whether a failed call failed in the TLS handshake because the server's certificate was not trusted.</summary>
    public static bool IsCertificateFailure(RpcException ex)
    {
        for (Exception? e = ex.Status.DebugException; e is not null; e = e.InnerException)
            if (e is AuthenticationException) return true;
        return false;
    }
}
