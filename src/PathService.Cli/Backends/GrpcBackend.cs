using System.Runtime.CompilerServices;
using Google.Rpc;
using Grpc.Core;
using Grpc.Net.Client;
using Grpc.Net.Client.Balancer;
using Grpc.Net.Client.Configuration;
using Microsoft.Extensions.DependencyInjection;
using PathService.Contracts.V1;

namespace PathService.Cli.Backends;

/// <summary>
/// Calls PathService over gRPC. Several addresses (comma-separated) are balanced round-robin on the client side, as
/// behind a headless Kubernetes Service. A trace whose server drops mid-stream is restarted on another instance:
/// the service is stateless and deterministic, so the restarted trace repeats the same points, and those already
/// delivered are skipped, so the caller sees one complete path.
/// </summary>
internal sealed class GrpcBackend : IAnalysisBackend
{
    private readonly GrpcChannel _channel;
    private readonly StructuralPathService.StructuralPathServiceClient _client;
    private readonly ImperfectionStudyService.ImperfectionStudyServiceClient _study;
    private readonly int _retries;

    public string Description { get; }

    public GrpcBackend(string addresses, int retries = 3)
    {
        var list = addresses.Split(',', StringSplitOptions.RemoveEmptyEntries | StringSplitOptions.TrimEntries).Select(a => new Uri(a)).ToList();
        if (list.Count == 0) throw new ArgumentException("no server address given");
        _retries = retries;
        Description = string.Join(", ", list);
        var options = new GrpcChannelOptions
        {
            Credentials = list[0].Scheme == "https" ? ChannelCredentials.SecureSsl : ChannelCredentials.Insecure,
            MaxReceiveMessageSize = 64 * 1024 * 1024,
            ServiceConfig = new ServiceConfig { LoadBalancingConfigs = { new RoundRobinConfig() } },
        };
        if (list.Count == 1)
            _channel = GrpcChannel.ForAddress(list[0], options);
        else
        {
            var services = new ServiceCollection();
            services.AddSingleton<ResolverFactory>(new StaticResolverFactory(_ => list.Select(u => new BalancerAddress(u.Host, u.Port))));
            options.ServiceProvider = services.BuildServiceProvider();
            _channel = GrpcChannel.ForAddress("static:///pathservice", options);
        }
        _client = new StructuralPathService.StructuralPathServiceClient(_channel);
        _study = new ImperfectionStudyService.ImperfectionStudyServiceClient(_channel);
    }

    public async IAsyncEnumerable<TracePathResponse> TraceAsync(TracePathRequest request, [EnumeratorCancellation] CancellationToken ct)
    {
        // On a restart everything up to and including the last point already delivered is skipped: the path is
        // deterministic, so the messages between points repeat exactly. The summary is held back until its stream
        // has ended cleanly, so that a stream cut short after a "cancelled" summary does not end the caller's path.
        int lastPoint = -1, sincePoint = 0;
        for (int attempt = 0; ; attempt++)
        {
            var call = _client.TracePath(request, cancellationToken: ct);
            var reader = call.ResponseStream;
            bool failed = false, resuming = attempt > 0 && lastPoint >= 0;
            int skipAfter = sincePoint; // cuts, critical points and events already delivered after that point
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
                if (resuming)
                {
                    if (current.UpdateCase == TracePathResponse.UpdateOneofCase.Point && current.Point.Index == lastPoint) resuming = false;
                    continue;
                }
                if (current.UpdateCase == TracePathResponse.UpdateOneofCase.Summary) { summary = current; continue; }
                if (skipAfter > 0) { skipAfter--; continue; }
                if (current.UpdateCase == TracePathResponse.UpdateOneofCase.Point) { lastPoint = current.Point.Index; sincePoint = 0; }
                else sincePoint++;
                yield return current;
            }
            call.Dispose();
            if (!failed)
            {
                if (summary is not null) yield return summary;
                yield break;
            }
            await Console.Error.WriteLineAsync($"server dropped the trace ({error!.Message}); retrying on another instance (attempt {attempt + 2})");
        }
    }

    public async IAsyncEnumerable<SweepImperfectionsResponse> SweepAsync(SweepImperfectionsRequest request, [EnumeratorCancellation] CancellationToken ct)
    {
        using var call = _study.SweepImperfections(request, cancellationToken: ct);
        while (true)
        {
            try { if (!await call.ResponseStream.MoveNext(ct)) yield break; }
            catch (RpcException ex) { throw Translate(ex); }
            yield return call.ResponseStream.Current;
        }
    }

    public async Task<CheckModelResponse> CheckAsync(CheckModelRequest request, CancellationToken ct) =>
        await Unary(() => _client.CheckModelAsync(request, cancellationToken: ct).ResponseAsync);

    public async Task<AnalyzeLinearResponse> LinearAsync(AnalyzeLinearRequest request, CancellationToken ct) =>
        await Unary(() => _client.AnalyzeLinearAsync(request, cancellationToken: ct).ResponseAsync);

    public async Task<FindBucklingModesResponse> BucklingAsync(FindBucklingModesRequest request, CancellationToken ct) =>
        await Unary(() => _client.FindBucklingModesAsync(request, cancellationToken: ct).ResponseAsync);

    private async Task<T> Unary<T>(Func<Task<T>> call)
    {
        for (int attempt = 0; ; attempt++)
        {
            try { return await call(); }
            catch (RpcException ex) when (ex.StatusCode == StatusCode.Unavailable && attempt < _retries) { }
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
            _ => new BackendUnavailableException($"{ex.StatusCode}: {ex.Status.Detail}", ex),
        };
    }

    public ValueTask DisposeAsync()
    {
        _channel.Dispose();
        return ValueTask.CompletedTask;
    }
}
