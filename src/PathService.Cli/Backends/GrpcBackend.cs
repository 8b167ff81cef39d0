using System.Runtime.CompilerServices;
using System.Security.Cryptography.X509Certificates;
using Google.Protobuf;
using Google.Rpc;
using Grpc.Core;
using Grpc.Health.V1;
using Grpc.Net.Client;
using PathService.Contracts.V1;

namespace PathService.Cli.Backends;

/// <summary>
/// Calls PathService over gRPC. Several addresses (comma-separated) are used round-robin, as behind a headless
/// Kubernetes Service. A call that meets an unavailable instance is retried on the next instance whose health reports
/// SERVING (instances that report NOT_SERVING, e.g. draining, or do not answer are skipped). A trace whose server
/// drops mid-stream is restarted that way: the service is stateless and deterministic, so the restarted trace repeats
/// the same points; each repeated message is compared with the one already delivered (points bit for bit: index, load
/// factor, monitored values) and only new messages are passed on, so the caller sees one complete path, or a
/// <see cref="ReplayMismatchException"/> if the restarted trace differs.
/// </summary>
internal sealed class GrpcBackend : IAnalysisBackend
{
    /// <summary>Name under which PathService reports the health of its analysis service.</summary>
    public const string HealthService = "pathservice.v1.StructuralPathService";

    private readonly List<Target> _targets;
    private readonly Metadata? _headers;
    private readonly int _retries;
    private int _next = -1;

    public string Description { get; }

    /// <param name="addresses">Comma-separated server URLs (http:// or https://).</param>
    /// <param name="connection">API key and custom CA; null = neither.</param>
    public GrpcBackend(string addresses, ConnectionSettings? connection = null, int retries = 3)
    {
        var list = addresses.Split(',', StringSplitOptions.RemoveEmptyEntries | StringSplitOptions.TrimEntries).Select(a => new Uri(a)).ToList();
        if (list.Count == 0) throw new ArgumentException("no server address given");
        connection ??= new ConnectionSettings();
        _retries = retries;
        Description = string.Join(", ", list);
        var ca = connection.CaFile is { } f ? TlsTrust.LoadCa(f) : null;
        _targets = list.Select(u => new Target(u, ca)).ToList();
        if (!string.IsNullOrEmpty(connection.ApiKey)) _headers = new Metadata { { connection.ApiKeyHeader, connection.ApiKey } };
    }

    /// <summary>One server: its channel and clients.</summary>
    private sealed class Target
    {
        public Uri Address { get; }
        public GrpcChannel Channel { get; }
        public StructuralPathService.StructuralPathServiceClient Client { get; }
        public ImperfectionSweepService.ImperfectionSweepServiceClient Study { get; }
        public Health.HealthClient Health { get; }

        public Target(Uri address, X509Certificate2? ca)
        {
            Address = address;
            var handler = new SocketsHttpHandler { EnableMultipleHttp2Connections = true };
            if (ca is not null) handler.SslOptions.RemoteCertificateValidationCallback = (_, cert, _, errors) => TlsTrust.Validate(cert, errors, ca);
            Channel = GrpcChannel.ForAddress(address, new GrpcChannelOptions
            {
                HttpHandler = handler,
                Credentials = address.Scheme == "https" ? ChannelCredentials.SecureSsl : ChannelCredentials.Insecure,
                MaxReceiveMessageSize = 64 * 1024 * 1024,
            });
            Client = new StructuralPathService.StructuralPathServiceClient(Channel);
            Study = new ImperfectionSweepService.ImperfectionSweepServiceClient(Channel);
            Health = new Health.HealthClient(Channel);
        }
    }

    /// <summary>The next instance in round-robin order.</summary>
    private Target NextTarget() => _targets[(int)((uint)Interlocked.Increment(ref _next) % (uint)_targets.Count)];

    /// <summary>
    /// For a retry after <paramref name="failed"/> was unavailable: the next instance (in address order, wrapping
    /// around, the failed one last) whose health reports SERVING. Unreachable or NOT_SERVING instances are skipped.
    /// </summary>
    private async Task<Target> ServingTargetAfterAsync(Target failed, CancellationToken ct)
    {
        int start = _targets.IndexOf(failed);
        for (int k = 1; k <= _targets.Count; k++)
        {
            var t = _targets[(start + k) % _targets.Count];
            try
            {
                var reply = await t.Health.CheckAsync(new HealthCheckRequest { Service = HealthService }, deadline: DateTime.UtcNow.AddSeconds(3), cancellationToken: ct);
                if (reply.Status == HealthCheckResponse.Types.ServingStatus.Serving) return t;
                await Console.Error.WriteLineAsync($"skipping {t.Address}: it reports {reply.Status}");
            }
            catch (RpcException ex) when (!ct.IsCancellationRequested)
            {
                await Console.Error.WriteLineAsync($"skipping {t.Address}: its health check failed ({ex.StatusCode})");
            }
        }
        throw new BackendUnavailableException($"no instance reports SERVING ({Description})");
    }

    /// <summary>What was delivered of a trace, compact: enough to check a replay bit for bit.</summary>
    private readonly record struct Delivered(TracePathResponse.UpdateOneofCase Case, int Index, long LoadFactorBits, long[] MonitoredBits, Google.Protobuf.ByteString? Bytes)
    {
        public static Delivered Of(TracePathResponse r) => r.UpdateCase == TracePathResponse.UpdateOneofCase.Point
            ? new(r.UpdateCase, r.Point.Index, BitConverter.DoubleToInt64Bits(r.Point.LoadFactor),
                r.Point.Monitored.Select(m => BitConverter.DoubleToInt64Bits(m.Value)).ToArray(), null)
            : new(r.UpdateCase, -1, 0, [], r.ToByteString());

        /// <summary>Null when <paramref name="r"/> repeats this message exactly; otherwise what differs.</summary>
        public string? Difference(TracePathResponse r)
        {
            if (r.UpdateCase != Case) return $"expected a {Case} message, got a {r.UpdateCase}";
            if (Case != TracePathResponse.UpdateOneofCase.Point)
                return r.ToByteString().Equals(Bytes) ? null : MessageDiff.First(r, TracePathResponse.Parser.ParseFrom(Bytes)) ?? $"the {Case} message differs";
            var p = r.Point;
            if (p.Index != Index) return $"expected point {Index}, got point {p.Index}";
            if (BitConverter.DoubleToInt64Bits(p.LoadFactor) != LoadFactorBits)
                return $"point {Index}: load factor {p.LoadFactor:R}, previously {BitConverter.Int64BitsToDouble(LoadFactorBits):R}";
            if (p.Monitored.Count != MonitoredBits.Length) return $"point {Index}: {p.Monitored.Count} monitored values, previously {MonitoredBits.Length}";
            for (int i = 0; i < MonitoredBits.Length; i++)
                if (BitConverter.DoubleToInt64Bits(p.Monitored[i].Value) != MonitoredBits[i])
                    return $"point {Index}: monitored value {i + 1} ({p.Monitored[i].Node}) is {p.Monitored[i].Value:R}, previously {BitConverter.Int64BitsToDouble(MonitoredBits[i]):R}";
            return null;
        }
    }

    public async IAsyncEnumerable<TracePathResponse> TraceAsync(TracePathRequest request, [EnumeratorCancellation] CancellationToken ct)
    {
        // Every delivered message is remembered (compactly); a restarted stream must repeat them exactly before it may
        // add new ones. The summary is held back until its stream has ended cleanly, so that a stream cut short after a
        // "cancelled" summary does not end the caller's path.
        var delivered = new List<Delivered>();
        var target = NextTarget();
        for (int attempt = 0; ; attempt++)
        {
            var call = target.Client.TracePath(request, _headers, cancellationToken: ct);
            var reader = call.ResponseStream;
            bool failed = false;
            int position = 0;
            Exception? error = null;
            TracePathResponse? summary = null;
            while (true)
            {
                TracePathResponse current;
                try
                {
                    if (!await reader.MoveNext(ct)) break;
                    current = reader.Current;
                }
                catch (RpcException ex) when (ex.StatusCode == StatusCode.Unavailable && attempt < _retries && !ct.IsCancellationRequested)
                {
                    failed = true;
                    error = ex;
                    break;
                }
                catch (RpcException ex) { call.Dispose(); throw Translate(ex); }
                if (current.UpdateCase == TracePathResponse.UpdateOneofCase.Summary) { summary = current; continue; }
                if (position < delivered.Count)
                {
                    if (delivered[position].Difference(current) is { } difference)
                    {
                        call.Dispose();
                        throw new ReplayMismatchException(
                            $"the trace restarted on {target.Address} differs from what was already received (message {position + 1}: {difference}); the results of the two instances disagree, so neither is reported as the path");
                    }
                    position++;
                    continue;
                }
                delivered.Add(Delivered.Of(current));
                position++;
                yield return current;
            }
            call.Dispose();
            if (!failed)
            {
                if (position < delivered.Count)
                    throw new ReplayMismatchException(
                        $"the trace restarted on {target.Address} ended after {position} messages, but {delivered.Count} had already been received from the first instance");
                if (summary is not null) yield return summary;
                yield break;
            }
            await Console.Error.WriteLineAsync($"server {target.Address} dropped the trace ({error!.Message}); retrying on another instance (attempt {attempt + 2})");
            target = await ServingTargetAfterAsync(target, ct);
        }
    }

    public async IAsyncEnumerable<SweepImperfectionsResponse> SweepAsync(SweepImperfectionsRequest request, [EnumeratorCancellation] CancellationToken ct)
    {
        using var call = NextTarget().Study.SweepImperfections(request, _headers, cancellationToken: ct);
        while (true)
        {
            try { if (!await call.ResponseStream.MoveNext(ct)) yield break; }
            catch (RpcException ex) { throw Translate(ex); }
            yield return call.ResponseStream.Current;
        }
    }

    public async Task<CheckModelResponse> CheckAsync(CheckModelRequest request, CancellationToken ct) =>
        await Unary(c => c.CheckModelAsync(request, _headers, cancellationToken: ct).ResponseAsync, ct);

    public async Task<AnalyzeLinearResponse> LinearAsync(AnalyzeLinearRequest request, CancellationToken ct) =>
        await Unary(c => c.AnalyzeLinearAsync(request, _headers, cancellationToken: ct).ResponseAsync, ct);

    public async Task<FindBucklingModesResponse> BucklingAsync(FindBucklingModesRequest request, CancellationToken ct) =>
        await Unary(c => c.FindBucklingModesAsync(request, _headers, cancellationToken: ct).ResponseAsync, ct);

    private async Task<T> Unary<T>(Func<StructuralPathService.StructuralPathServiceClient, Task<T>> call, CancellationToken ct)
    {
        var target = NextTarget();
        for (int attempt = 0; ; attempt++)
        {
            try { return await call(target.Client); }
            catch (RpcException ex) when (ex.StatusCode == StatusCode.Unavailable && attempt < _retries && !ct.IsCancellationRequested)
            {
                await Console.Error.WriteLineAsync($"server {target.Address} unavailable ({ex.Status.Detail}); retrying on another instance (attempt {attempt + 2})");
                target = await ServingTargetAfterAsync(target, ct);
            }
            catch (RpcException ex) { throw Translate(ex); }
        }
    }

    /// <summary>Maps a status to the CLI's exceptions, reading the richer error details (BadRequest, ErrorInfo).</summary>
    private static Exception Translate(RpcException ex)
    {
        var findings = new List<Finding>();
        var status = ex.GetRpcStatus();
        if (status?.GetDetail<BadRequest>() is { } bad)
            findings.AddRange(bad.FieldViolations.Select(v => new Finding { Severity = FindingSeverity.Error, Field = v.Field, Message = v.Description }));
        if (status?.GetDetail<ErrorInfo>() is { } info)
            findings.Add(new Finding { Severity = FindingSeverity.Error, Code = info.Reason, ItemId = info.Metadata.TryGetValue("node", out var n) ? n : "", Message = status.Message });
        return ex.StatusCode switch
        {
            StatusCode.InvalidArgument or StatusCode.FailedPrecondition => new AnalysisRejectedException(ex.Status.Detail, findings),
            StatusCode.ResourceExhausted => new AnalysisRejectedException(ex.Status.Detail, findings, resourceLimit: true),
            StatusCode.Unauthenticated => new AuthenticationFailedException($"the server wants an API key (--api-key or PATHSERVICE_API_KEY): {ex.Status.Detail}"),
            StatusCode.PermissionDenied => new AuthenticationFailedException($"the server refused the API key: {ex.Status.Detail}"),
            _ when TlsTrust.IsCertificateFailure(ex) => new BackendUnavailableException(
                $"{ex.StatusCode}: the server's TLS certificate is not trusted (give its CA with --ca-file): {ex.Status.Detail}", ex),
            _ => new BackendUnavailableException($"{ex.StatusCode}: {ex.Status.Detail}", ex),
        };
    }

    public ValueTask DisposeAsync()
    {
        foreach (var t in _targets) t.Channel.Dispose();
        return ValueTask.CompletedTask;
    }
}
