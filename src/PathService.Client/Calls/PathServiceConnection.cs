using System.Net.Security;
using System.Runtime.CompilerServices;
using System.Security.Cryptography.X509Certificates;
using Grpc.Core;
using Grpc.Core.Interceptors;
using Grpc.Net.Client;
using Grpc.Net.Client.Balancer;
using Grpc.Net.Client.Configuration;
using PathService.Contracts.V1;

namespace PathService.Client.Calls;

/// <summary>
/// A connection to PathService for plug-ins and pipelines: one channel (round-robin over several addresses), the API
/// key on every call, a private certificate authority if given, unary calls retried on UNAVAILABLE, and traces that
/// survive an instance going away. A trace dropped with UNAVAILABLE is restarted on another instance; the service is
/// stateless and deterministic, so the restarted trace repeats the same messages: those already delivered are skipped,
/// and every replayed point is compared bit for bit with the one received before (a difference throws
/// <see cref="ReplayMismatchException"/>). The summary is held back until its stream has ended cleanly, so a stream
/// cut short after a shutdown's "cancelled" summary does not end the caller's path.
/// </summary>
public sealed class PathServiceConnection : IAsyncDisposable, IDisposable
{
    private readonly GrpcChannel _channel;
    private readonly int _retries;

    public PathServiceConnection(ConnectionOptions options)
    {
        ArgumentNullException.ThrowIfNull(options);
        if (options.Addresses.Count == 0) throw new ArgumentException("no server address given", nameof(options));
        _retries = Math.Max(0, options.Retries);
        var first = options.Addresses[0];
        var handler = new SocketsHttpHandler { EnableMultipleHttp2Connections = true };
        if (options.CertificateAuthorityFile is { } caFile)
        {
            var ca = X509Certificate2.CreateFromPemFile(caFile);
            handler.SslOptions.RemoteCertificateValidationCallback = (_, certificate, _, errors) => TrustedBy(ca, certificate, errors);
        }
        var channelOptions = new GrpcChannelOptions
        {
            HttpHandler = handler,
            Credentials = first.Scheme == "https" ? ChannelCredentials.SecureSsl : ChannelCredentials.Insecure,
            MaxReceiveMessageSize = options.MaxReceiveMessageBytes,
            ServiceConfig = new ServiceConfig { LoadBalancingConfigs = { new RoundRobinConfig() } },
        };
        if (options.Addresses.Count == 1)
            _channel = GrpcChannel.ForAddress(first, channelOptions);
        else
        {
            var resolver = new StaticResolverFactory(_ => options.Addresses.Select(u => new BalancerAddress(u.Host, u.Port)));
            channelOptions.ServiceProvider = new SingleServiceProvider(typeof(ResolverFactory), resolver);
            _channel = GrpcChannel.ForAddress($"static:///pathservice", channelOptions);
        }
        CallInvoker invoker = string.IsNullOrEmpty(options.ApiKey)
            ? _channel.CreateCallInvoker()
            : _channel.Intercept(new ApiKeyHeaderInterceptor(options.ApiKeyHeader, options.ApiKey));
        Paths = new StructuralPathService.StructuralPathServiceClient(invoker);
        Sweeps = new ImperfectionSweepService.ImperfectionSweepServiceClient(invoker);
        Description = string.Join(", ", options.Addresses);
    }

    /// <summary>The addresses, for messages.</summary>
    public string Description { get; }

    /// <summary>The generated client of the analysis service, for calls this class does not wrap.</summary>
    public StructuralPathService.StructuralPathServiceClient Paths { get; }

    /// <summary>The generated client of the imperfection sweep service.</summary>
    public ImperfectionSweepService.ImperfectionSweepServiceClient Sweeps { get; }

    /// <summary>Streams a trace as it converges; cancel the token to stop the analysis on the server.</summary>
    public async IAsyncEnumerable<TracePathResponse> TraceAsync(TracePathRequest request, [EnumeratorCancellation] CancellationToken ct = default)
    {
        var delivered = new List<PathPoint>();
        int sincePoint = 0; // cuts, critical points and other updates delivered after the last point
        for (int attempt = 0; ; attempt++)
        {
            using var call = Paths.TracePath(request, cancellationToken: ct);
            var replay = new ReplayCheck(delivered, delivered.Count);
            int skipAfter = sincePoint;
            bool dropped = false;
            TracePathResponse? summary = null;
            while (true)
            {
                try
                {
                    if (!await call.ResponseStream.MoveNext(ct)) break;
                }
                catch (RpcException ex) when (ex.StatusCode == StatusCode.Unavailable && attempt < _retries && !ct.IsCancellationRequested)
                {
                    dropped = true;
                    break;
                }
                var current = call.ResponseStream.Current;
                if (replay.Active)
                {
                    // Everything up to and including the last point already delivered repeats; check the points.
                    if (current.UpdateCase == TracePathResponse.UpdateOneofCase.Point) replay.Compare(current.Point);
                    continue;
                }
                if (current.UpdateCase == TracePathResponse.UpdateOneofCase.Summary) { summary = current; continue; }
                if (skipAfter > 0) { skipAfter--; continue; }
                if (current.UpdateCase == TracePathResponse.UpdateOneofCase.Point) { delivered.Add(Light(current.Point)); sincePoint = 0; }
                else sincePoint++;
                yield return current;
            }
            if (!dropped)
            {
                if (summary is not null) yield return summary;
                yield break;
            }
        }
    }

    /// <summary>What the replay check needs of a delivered point: everything but its (possibly large) full state.</summary>
    private static PathPoint Light(PathPoint p)
    {
        var copy = p.Clone();
        copy.State = null;
        return copy;
    }

    /// <summary>Streams an imperfection sweep; retried on UNAVAILABLE only while nothing has been delivered.</summary>
    public async IAsyncEnumerable<SweepImperfectionsResponse> SweepAsync(SweepImperfectionsRequest request, [EnumeratorCancellation] CancellationToken ct = default)
    {
        for (int attempt = 0; ; attempt++)
        {
            using var call = Sweeps.SweepImperfections(request, cancellationToken: ct);
            bool any = false, retry = false;
            while (true)
            {
                try
                {
                    if (!await call.ResponseStream.MoveNext(ct)) break;
                }
                catch (RpcException ex) when (ex.StatusCode == StatusCode.Unavailable && !any && attempt < _retries && !ct.IsCancellationRequested)
                {
                    retry = true;
                    break;
                }
                any = true;
                yield return call.ResponseStream.Current;
            }
            if (!retry) yield break;
        }
    }

    public Task<CheckModelResponse> CheckAsync(CheckModelRequest request, CancellationToken ct = default) =>
        Unary(() => Paths.CheckModelAsync(request, cancellationToken: ct).ResponseAsync, ct);

    public Task<AnalyzeLinearResponse> LinearAsync(AnalyzeLinearRequest request, CancellationToken ct = default) =>
        Unary(() => Paths.AnalyzeLinearAsync(request, cancellationToken: ct).ResponseAsync, ct);

    public Task<FindBucklingModesResponse> BucklingAsync(FindBucklingModesRequest request, CancellationToken ct = default) =>
        Unary(() => Paths.FindBucklingModesAsync(request, cancellationToken: ct).ResponseAsync, ct);

    private async Task<T> Unary<T>(Func<Task<T>> call, CancellationToken ct)
    {
        for (int attempt = 0; ; attempt++)
        {
            try { return await call(); }
            catch (RpcException ex) when (ex.StatusCode == StatusCode.Unavailable && attempt < _retries && !ct.IsCancellationRequested) { }
        }
    }

    /// <summary>A server certificate is accepted when it chains to the given CA (or already passes the system's checks).</summary>
    private static bool TrustedBy(X509Certificate2 ca, X509Certificate? certificate, SslPolicyErrors errors)
    {
        if (errors == SslPolicyErrors.None) return true;
        if (certificate is null || (errors & SslPolicyErrors.RemoteCertificateNameMismatch) != 0) return false;
        using var chain = new X509Chain();
        chain.ChainPolicy.TrustMode = X509ChainTrustMode.CustomRootTrust;
        chain.ChainPolicy.CustomTrustStore.Add(ca);
        chain.ChainPolicy.RevocationMode = X509RevocationMode.NoCheck;
        return chain.Build(new X509Certificate2(certificate));
    }

    public void Dispose() => _channel.Dispose();

    public ValueTask DisposeAsync()
    {
        _channel.Dispose();
        return ValueTask.CompletedTask;
    }

    /// <summary>The minimal service provider the channel needs to find the static resolver (no DI container required).</summary>
    private sealed class SingleServiceProvider(Type type, object instance) : IServiceProvider
    {
        public object? GetService(Type serviceType) => serviceType == type ? instance : null;
    }
}
