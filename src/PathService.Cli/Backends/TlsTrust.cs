using System.Security.Authentication;
using System.Security.Cryptography.X509Certificates;
using Grpc.Core;

namespace PathService.Cli.Backends;

/// <summary>
/// The command line's side of a private certificate authority (--ca-file): the file is read first so that a missing or
/// unreadable one is an input error, and a failed handshake is told apart from other failures. The trust decision
/// itself (chain ending at that CA, host named) is the client library's.
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

    /// <summary>Whether a failed call failed in the TLS handshake because the server's certificate was not trusted.</summary>
    public static bool IsCertificateFailure(RpcException ex)
    {
        for (Exception? e = ex.Status.DebugException; e is not null; e = e.InnerException)
            if (e is AuthenticationException) return true;
        return false;
    }
}
