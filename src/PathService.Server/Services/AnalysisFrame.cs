using System.Diagnostics;
using Grpc.Core;
using PathService.Application.Errors;
using PathService.Contracts.V1;
using PathService.Server.Errors;
using PathService.Server.Hosting;
using PathService.Server.Limits;
using PathService.Server.Security;
using PathService.Server.Telemetry;

namespace PathService.Server.Services;

/// <summary>
/// What every analysis RPC shares, whichever gRPC service it belongs to: the span and counters, shutdown, the caller's
/// cap, the bounded queue, the call's time bound, and the translation of the application layer's refusals into statuses.
/// </summary>
public sealed class AnalysisFrame(
    RequestLimits limits, AnalysisGate gate, CallerLimiter callers, ShutdownCoordinator shutdown,
    PathServiceTelemetry telemetry, ILogger<AnalysisFrame> logger)
{
    /// <summary>
    /// Common frame of every analysis: one span, the started/completed/failed counters, an analysis slot, and the
    /// translation of refusals into status codes. Everything that can refuse a request runs before the slot is taken,
    /// in this order: shutdown, <paramref name="prepare"/> (the application layer's Prepare: limits, mapping, validation;
    /// it returns the analysis itself), the caller's own cap, the bounded queue. Heavy preparation (shaping an
    /// imperfection by buckling modes, the exact memory estimate) belongs to the analysis's run, inside the slot.
    /// The analysis gets an <see cref="AnalysisCall"/>: a token that the call's cancellation, its deadline, the end of a
    /// shutdown's grace period and the analysis's own time bound all cancel, and writes that cannot outlast that bound;
    /// it returns the outcome tag. An analysis stopped by its time bound ends with DEADLINE_EXCEEDED.
    /// </summary>
    public async Task RunAsync(string rpc, StructureModel? model, ServerCallContext context, Func<PreparedAnalysis> prepare)
    {
        using var activity = PathServiceTelemetry.Source.StartActivity($"pathservice.{rpc}", ActivityKind.Internal);
        activity?.SetTag("pathservice.nodes", model?.Nodes.Count ?? 0);
        activity?.SetTag("pathservice.bars", model?.Bars.Count ?? 0);
        PathServiceTelemetry.TagRpc(activity, rpc);
        telemetry.RecordStarted(rpc);
        var caller = ApiKeyInterceptor.CallerOf(context);
        // Log scope: counts, a truncated model name and the caller's name; never the model itself, never a key.
        using var scope = logger.BeginScope(new Dictionary<string, object?>
        {
            ["Rpc"] = rpc,
            ["Caller"] = caller.Name,
            ["ModelName"] = Truncate(model?.Name),
            ["Nodes"] = model?.Nodes.Count ?? 0,
            ["Bars"] = model?.Bars.Count ?? 0,
        });
        using var abort = CancellationTokenSource.CreateLinkedTokenSource(context.CancellationToken, shutdown.AbortToken);
        long started = Stopwatch.GetTimestamp();
        try
        {
            ThrowIfDraining();
            var run = prepare();
            using var perCaller = caller.MaxConcurrentAnalyses > 0
                ? callers.TryEnter(caller.Name, caller.MaxConcurrentAnalyses) ?? throw RpcErrors.CallerBusy(caller.Name, caller.MaxConcurrentAnalyses, Retry)
                : null;
            var (lease, refusal) = await gate.EnterAsync(abort.Token);
            using var _ = lease;
            if (lease is null)
                throw refusal == GateRefusal.QueueTimeout
                    ? RpcErrors.QueueTimeout(gate.Capacity, gate.QueueTimeout, Retry)
                    : RpcErrors.Busy(gate.Capacity, Retry, gate.QueueCapacity);
            ThrowIfDraining();
            telemetry.AnalysesActive.Add(1);
            string outcome;
            using var call = new AnalysisCall(rpc, context, abort.Token, run.TimeLimit,
                TimeSpan.FromSeconds(limits.Values.StalledWriteSeconds), telemetry);
            try { outcome = await run.Run(call); }
            catch (OperationCanceledException) when (call.TimeBoundReached && !abort.IsCancellationRequested)
            {
                throw call.Exceeded("the analysis");
            }
            finally { telemetry.AnalysesActive.Add(-1); }
            telemetry.RecordCompleted(rpc, outcome, Stopwatch.GetElapsedTime(started).TotalSeconds);
            activity?.SetTag(PathServiceTelemetry.Attributes.Outcome, PathServiceTelemetry.OutcomeLabel(outcome));
        }
        catch (Exception ex)
        {
            var rpcEx = Translate(ex, context, shutdown.AbortToken);
            // error.type: the gRPC status name, or the exception's type for a server fault (OpenTelemetry conventions).
            string errorType = rpcEx is null ? PathServiceTelemetry.ExceptionType(ex) : PathServiceTelemetry.StatusName(rpcEx.StatusCode);
            telemetry.RecordFailed(rpc, errorType, Stopwatch.GetElapsedTime(started).TotalSeconds);
            activity?.SetTag(PathServiceTelemetry.Attributes.ErrorType, errorType);
            activity?.SetStatus(ActivityStatusCode.Error, errorType);
            if (rpcEx is null)
            {
                // A genuine server fault. Logged with its type and stack but without the exception message, which may
                // quote request values; the caller gets INTERNAL without details.
                logger.LogError("{Rpc} failed unexpectedly: {ExceptionType}{NewLine}{StackTrace}", rpc, ex.GetType().FullName, Environment.NewLine, ex.StackTrace);
                throw new RpcException(new Status(StatusCode.Internal, "internal error of the analysis service"));
            }
            if (rpcEx.StatusCode is StatusCode.DeadlineExceeded)
                logger.LogInformation("{Rpc} stopped: the caller's deadline expired ({ExceptionType})", rpc, ex.GetType().Name);
            else if (rpcEx.StatusCode is StatusCode.Cancelled)
                logger.LogInformation("{Rpc} cancelled by the caller ({ExceptionType})", rpc, ex.GetType().Name);
            else
                logger.LogInformation("{Rpc} refused with {StatusCode}: {Detail}", rpc, rpcEx.StatusCode, LogText.Cut(LogText.CutQuoted(rpcEx.Status.Detail), 300));
            if (ReferenceEquals(rpcEx, ex)) throw;
            throw rpcEx;
        }
    }

    private TimeSpan Retry => TimeSpan.FromSeconds(limits.Values.RetryAfterSeconds);

    private void ThrowIfDraining()
    {
        if (shutdown.Draining) throw new RpcException(new Status(StatusCode.Unavailable, "the server is shutting down; retry on another instance"));
    }

    /// <summary>
    /// Maps a failure to the status the caller should see; null for a genuine server fault (then INTERNAL). Anything
    /// thrown once the call itself is over (the caller cancelled, its deadline passed, the connection went away) is
    /// CANCELLED or DEADLINE_EXCEEDED whatever its type: a write to a stream whose call has ended throws
    /// IOException or InvalidOperationException, and that is the caller's doing, not a fault.
    /// </summary>
    private static RpcException? Translate(Exception ex, ServerCallContext context, CancellationToken abort)
    {
        var call = context.CancellationToken;
        if (ex is RpcException { StatusCode: not (StatusCode.Cancelled or StatusCode.DeadlineExceeded) } r) return r;
        // The call is over when its token fired or its deadline passed: grpc-dotnet completes an expired call before it
        // cancels the token, so a write in that window throws InvalidOperationException ("the request is complete")
        // with the token still uncancelled; a client's own deadline timer resets the stream a few ms before the
        // server's timer fires.
        bool deadline = DeadlinePassed(context);
        bool callOver = call.IsCancellationRequested || deadline;
        bool endOfCall = ex is OperationCanceledException or IOException or ObjectDisposedException or RpcException
            || ex is InvalidOperationException;
        if (endOfCall && (callOver || ex is OperationCanceledException or RpcException))
        {
            if (abort.IsCancellationRequested && !call.IsCancellationRequested)
                return new RpcException(new Status(StatusCode.Unavailable, "the server shut down before the analysis finished; retry on another instance"));
            if (deadline)
                return new RpcException(new Status(StatusCode.DeadlineExceeded, "the call's deadline expired before the analysis finished"));
            if (ex is RpcException rc) return rc;
            return new RpcException(new Status(StatusCode.Cancelled, "the call was cancelled"));
        }
        // Every input fault reaches us as the application layer's refusal; anything else is a server fault.
        return ex is AnalysisRefusedException refusal ? RpcErrors.From(refusal) : null;
    }

    /// <summary>
    /// True when the call had a deadline and it has passed, or is due within <see cref="DeadlineSlack"/>: the client's
    /// timer starts before the server's (the grpc-timeout header is relative), so its reset can arrive first.
    /// </summary>
    private static bool DeadlinePassed(ServerCallContext context) =>
        context.Deadline != DateTime.MaxValue && context.Deadline <= DateTime.UtcNow + DeadlineSlack;

    private static readonly TimeSpan DeadlineSlack = TimeSpan.FromMilliseconds(200);

    private static string Truncate(string? s, int max = 64) => LogText.Cut(s, max);
}
