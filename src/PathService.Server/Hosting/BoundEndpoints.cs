using System.Net;
using Microsoft.AspNetCore.Server.Kestrel.Core;

namespace PathService.Server.Hosting;

/// <summary>
/// The endpoints Kestrel listens on, kept so that the actual ports are known after start (port 0 = a free port is
/// picked, which tests and the interop script rely on).
/// </summary>
public sealed class BoundEndpoints
{
    internal ListenOptions? GrpcListen { get; set; }

    /// <summary>True when both ports use TLS.</summary>
    public bool Tls { get; init; }

    /// <summary>URL of the gRPC endpoint (https with TLS); valid once the server has started.</summary>
    public string GrpcUrl => UrlOf(Grpc!, Tls);
    internal ListenOptions? HttpListen { get; set; }

    /// <summary>gRPC (HTTP/2 cleartext) endpoint; valid once the server has started.</summary>
    public IPEndPoint? Grpc => GrpcListen?.IPEndPoint;

    /// <summary>HTTP/1.1 endpoint (JSON transcoding, metrics), or null when disabled.</summary>
    public IPEndPoint? Http => HttpListen?.IPEndPoint;

    public static string UrlOf(IPEndPoint ep, bool tls = false) =>
        $"{(tls ? "https" : "http")}://{(ep.Address.Equals(IPAddress.Any) ? IPAddress.Loopback : ep.Address)}:{ep.Port}";
}
