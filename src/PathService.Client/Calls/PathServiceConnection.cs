using System.Net.Security;
using System.Runtime.CompilerServices;
using System.Security.Cryptography.X509Certificates;
using Grpc.Core;
using Grpc.Core.Interceptors;
using Grpc.Health.V1;
using Grpc.Net.Client;
using Grpc.Net.Client.Balancer;
using Grpc.Net.Client.Configuration;
using PathService.Contracts.V1;

namespace PathService.Client.Calls;

/// <summary>
/// A connection to PathService for plug-ins and pipelines: one channel balanced round-robin over several addresses
/// (Grpc.Net.Client's own balancer), the API key on every call, a private certificate authority if given, unary calls
/// retried on UNAVAILABLE by Grpc.Net.Client's own retry policy, and traces that survive an instance going away.
/// <para>
/// A trace dropped with UNAVAILABLE is restarted by hand, not by the built-in retry: that retry only repeats a call that
/// has not yet delivered anything (a call is "committed" once the first response arrives), and a trace is long-lived
/// with many messages already passed on. Before the restart the instances' gRPC health is asked; those that do not
/// report SERVING (draining, dead) are skipped, and only the serving ones are given to the balancer. The service is
/// stateless and deterministic, so the restarted trace repeats the same messages: every replayed message is compared
/// with the one delivered before (points bit for bit, see <see cref="ReplayCheck"/>), none is passed on twice, and a
/// difference, or a restarted stream that ends early, throws <see cref="ReplayMismatchException"/>. The summary is held
/// back until its stream has ended cleanly, so a stream cut short after a shutdown's "cancelled" summary does not end
/// the caller's path.
/// </para>
/// </summary>
public sealed class PathServiceConnection : IAsyncDisposable, IDisposable
{
    private readonly GrpcChannel _channel;
    private readonly int _retries;
    private readonly ConnectionOptions _options;
    private readonly ServingAddresses? _serving;
    private readonly List<(Uri Address, GrpcChannel Channel, Health.HealthClient Client)> _health;

    public PathServiceConnection(ConnectionOptions options)
    {
        ArgumentNullException.ThrowIfNull(options);
        if (options.Addresses.Count == 0) throw new ArgumentException("no server address given", nameof(options));
        _options = options;
        _retries = Math.Max(0, options.Retries);
        var first = options.Addresses[0];
        X509Certificate2? ca = options.CertificateAuthorityFile is { } caFile ? X509CertificateLoader.LoadCertificateFromFile(caFile) : null;
        var serviceConfig = new ServiceConfig { LoadBalancingConfigs = { new RoundRobinConfig() } };
        if (_retries > 0) serviceConfig.MethodConfigs.Add(UnaryRetry(_retries));
        var channelOptions = ChannelOptions(first, ca, options.MaxReceiveMessageBytes);
        channelOptions.ServiceConfig = serviceConfig;
        channelOptions.MaxRetryAttempts = Math.Max(5, _retries + 1);
        if (options.Addresses.Count == 1)
            _channel = GrpcChannel.ForAddress(first, channelOptions);
        else
        {
            _serving = new ServingAddresses(options.Addresses);
            channelOptions.ServiceProvider = new SingleServiceProvider(typeof(ResolverFactory), _serving);
            _channel = GrpcChannel.ForAddress($"{ServingAddresses.Scheme}:///pathservice", channelOptions);
        }
        // One small channel per address for health checks: the balanced channel cannot be told which instance to ask.
        _health = options.Addresses.Select(a =>
        {
            var c = GrpcChannel.ForAddress(a, ChannelOptions(a, ca, 1024 * 1024));
            return (a, c, new Health.HealthClient(c));
        }).ToList();
        CallInvoker invoker = string.IsNullOrEmpty(options.ApiKey)
            ? _channel.CreateCallInvoker()
            : _channel.Intercept(new ApiKeyHeaderInterceptor(options.ApiKeyHeader, options.ApiKey));
        Paths = new StructuralPathService.StructuralPathServiceClient(invoker);
        Sweeps = new ImperfectionSweepService.ImperfectionSweepServiceClient(invoker);
        Description = string.Join(", ", options.Addresses);
    }

    private static GrpcChannelOptions ChannelOptions(Uri address, X509Certificate2? ca, int maxReceive)
    {
        var handler = new SocketsHttpHandler { EnableMultipleHttp2Connections = true };
        if (ca is not null) handler.SslOptions.RemoteCertificateValidationCallback = (_, certificate, _, errors) => TrustedBy(ca, certificate, errors);
        return new GrpcChannelOptions
        {
            HttpHandler = handler,
            Credentials = address.Scheme == "https" ? ChannelCredentials.SecureSsl : ChannelCredentials.Insecure,
            MaxReceiveMessageSize = maxReceive,
        };
    }

    /// <summary>
    /// Grpc.Net.Client's retry policy for the calls that deliver their answer at once: every unary method of the
    /// analysis service, and the imperfection sweep, whose built-in retry stops by itself once the first result has
    /// arrived (the call is committed then), which is exactly when a blind retry would repeat results. Each retry is a
    /// new pick of the round-robin balancer, so it goes to the next instance.
    /// </summary>
    private static MethodConfig UnaryRetry(int retries)
    {
        var config = new MethodConfig
        {
            RetryPolicy = new RetryPolicy
            {
                MaxAttempts = retries + 1, // Grpc.Net.Client caps it at MaxRetryAttempts
                InitialBackoff = TimeSpan.FromMilliseconds(100),
                MaxBackoff = TimeSpan.FromSeconds(1),
                BackoffMultiplier = 2,
                RetryableStatusCodes = { StatusCode.Unavailable },
            },
        };
        foreach (var m in StructuralPathService.Descriptor.Methods.Where(m => !m.IsServerStreaming && !m.IsClientStreaming))
            config.Names.Add(new MethodName { Service = StructuralPathService.Descriptor.FullName, Method = m.Name });
        config.Names.Add(new MethodName { Service = ImperfectionSweepService.Descriptor.FullName }); // all its methods
        return config;
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
        var delivered = new List<TracePathResponse>(); // light copies (no full states) of every message passed on
        for (int attempt = 0; ; attempt++)
        {
            var replay = new ReplayCheck(delivered, delivered.Count);
            RpcException? dropped = null;
            TracePathResponse? summary = null;
            using (var call = Paths.TracePath(request, cancellationToken: ct))
            {
                while (true)
                {
                    try
                    {
                        if (!await call.ResponseStream.MoveNext(ct)) break;
                    }
                    catch (RpcException ex) when (ex.StatusCode == StatusCode.Unavailable && attempt < _retries && !ct.IsCancellationRequested)
                    {
                        dropped = ex;
                        break;
                    }
                    var current = call.ResponseStream.Current;
                    if (current.UpdateCase == TracePathResponse.UpdateOneofCase.Summary) { summary = current; continue; }
                    if (replay.Active) { replay.Compare(current); continue; }
                    delivered.Add(ReplayCheck.Light(current));
                    yield return current;
                }
            }
            if (dropped is null)
            {
                replay.CompleteOrThrow();
                if (summary is not null) yield return summary;
                yield break;
            }
            _options.Notice?.Invoke($"the trace was dropped ({dropped.StatusCode}: {dropped.Status.Detail}); retrying on another instance (attempt {attempt + 2})");
            await UseServingInstancesAsync(ct);
        }
    }

    /// <summary>
    /// Asks every instance's gRPC health and gives the balancer only those that report SERVING; instances reporting
    /// NOT_SERVING (draining) or not answering are skipped with a notice. None serving: UNAVAILABLE.
    /// </summary>
    public async Task<IReadOnlyList<Uri>> UseServingInstancesAsync(CancellationToken ct = default)
    {
        var answers = await Task.WhenAll(_health.Select(async h =>
        {
            try
            {
                var reply = await h.Client.CheckAsync(new HealthCheckRequest { Service = _options.HealthService },
                    deadline: DateTime.UtcNow + _options.HealthCheckTimeout, cancellationToken: ct);
                return (h.Address, Note: reply.Status == HealthCheckResponse.Types.ServingStatus.Serving ? null : $"it reports {reply.Status}");
            }
            catch (RpcException ex) when (!ct.IsCancellationRequested)
            {
                return (h.Address, Note: (string?)$"its health check failed ({ex.StatusCode})");
            }
        }));
        foreach (var (address, note) in answers)
            if (note is not null) _options.Notice?.Invoke($"skipping {address}: {note}");
        var serving = answers.Where(a => a.Note is null).Select(a => a.Address).ToList();
        if (serving.Count == 0) throw new RpcException(new Status(StatusCode.Unavailable, $"no instance reports SERVING ({Description})"));
        _serving?.Publish(serving);
        return serving;
    }

    /// <summary>Streams an imperfection sweep; retried on UNAVAILABLE (built-in policy) only while nothing has been delivered.</summary>
    public async IAsyncEnumerable<SweepImperfectionsResponse> SweepAsync(SweepImperfectionsRequest request, [EnumeratorCancellation] CancellationToken ct = default)
    {
        using var call = Sweeps.SweepImperfections(request, cancellationToken: ct);
        while (await call.ResponseStream.MoveNext(ct)) yield return call.ResponseStream.Current;
    }

    public Task<CheckModelResponse> CheckAsync(CheckModelRequest request, CancellationToken ct = default) =>
        Paths.CheckModelAsync(request, cancellationToken: ct).ResponseAsync;

    public Task<AnalyzeLinearResponse> LinearAsync(AnalyzeLinearRequest request, CancellationToken ct = default) =>
        Paths.AnalyzeLinearAsync(request, cancellationToken: ct).ResponseAsync;

    public Task<FindBucklingModesResponse> BucklingAsync(FindBucklingModesRequest request, CancellationToken ct = default) =>
        Paths.FindBucklingModesAsync(request, cancellationToken: ct).ResponseAsync;

    public Task<ImportIfcModelResponse> ImportIfcAsync(ImportIfcModelRequest request, CancellationToken ct = default) =>
        Paths.ImportIfcModelAsync(request, cancellationToken: ct).ResponseAsync;

    /// <summary>
    /// A server certificate is accepted when it passes the system's checks, or when it names the host and chains to
    /// the given CA (only that CA as root; revocation is not checked, a private CA rarely publishes lists).
    /// </summary>
    private static bool TrustedBy(X509Certificate2 ca, X509Certificate? certificate, SslPolicyErrors errors)
    {
        if (errors == SslPolicyErrors.None) return true;
        if (certificate is null || (errors & (SslPolicyErrors.RemoteCertificateNameMismatch | SslPolicyErrors.RemoteCertificateNotAvailable)) != 0) return false;
        using var presented = new X509Certificate2(certificate);
        using var chain = new X509Chain();
        chain.ChainPolicy.TrustMode = X509ChainTrustMode.CustomRootTrust;
        chain.ChainPolicy.CustomTrustStore.Add(ca);
        chain.ChainPolicy.RevocationMode = X509RevocationMode.NoCheck;
        return chain.Build(presented);
    }

    public void Dispose()
    {
        _channel.Dispose();
        foreach (var h in _health) h.Channel.Dispose();
    }

    public ValueTask DisposeAsync()
    {
        Dispose();
        return ValueTask.CompletedTask;
    }

    /// <summary>The minimal service provider the channel needs to find the resolver (no DI container required).</summary>
    private sealed class SingleServiceProvider(Type type, object instance) : IServiceProvider
    {
        public object? GetService(Type serviceType)
        {
            if (serviceType == type) return instance;
            // The channel asks for every registered factory (IEnumerable<ResolverFactory>, IEnumerable<LoadBalancerFactory>).
            if (serviceType.IsGenericType && serviceType.GetGenericTypeDefinition() == typeof(IEnumerable<>))
            {
                var element = serviceType.GetGenericArguments()[0];
                var list = Array.CreateInstance(element, element == type ? 1 : 0);
                if (element == type) list.SetValue(instance, 0);
                return list;
            }
            return null;
        }
    }
}
