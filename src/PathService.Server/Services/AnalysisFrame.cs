using System.Diagnostics;
using Grpc.Core;
using PathService.Contracts.Mapping;
using PathService.Contracts.V1;
using PathService.Engine;
using PathService.Engine.Model;
using PathService.Server.Errors;
using PathService.Server.Hosting;
using PathService.Server.Limits;
using PathService.Server.Security;
using PathService.Server.Telemetry;
using FindingSeverity = PathService.Engine.Model.FindingSeverity;

namespace PathService.Server.Services;

/// <summary>
/// What every analysis RPC shares, whichever gRPC service it belongs to: the span and counters, shutdown, size and
/// memory limits, the caller's cap, the bounded queue, and the translation of engine exceptions into statuses.
/// </summary>
public sealed class AnalysisFrame(
    RequestLimits limits, AnalysisGate gate, CallerLimiter callers, ShutdownCoordinator shutdown,
    PathServiceTelemetry telemetry, ILogger<AnalysisFrame> logger)
{
    /// <summary>
    /// Common frame of every analysis: one span, the started/completed/failed counters, the limits, an analysis slot,
    /// and the translation of engine exceptions into status codes. Everything that can refuse a request runs before
    /// the slot is taken, in this order: shutdown, size limits, <paramref name="prepare"/> (mapping, validation,
    /// cheap memory bound; it returns the analysis itself), the caller's own cap, the bounded queue. Heavy preparation
    /// (shaping an imperfection by buckling modes, the exact memory estimate) belongs to the analysis, inside the slot.
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
            limits.CheckModelSize(model);
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
    /// Before the slot: true when the cheap upper bound of the memory (a dense factor) exceeds the budget, so the exact
    /// estimate (ordering and symbolic analysis) must follow inside the slot with <see cref="CheckMemory"/>.
    /// </summary>
    public bool MemoryNeedsExactEstimate(StructuralModel model, int extraVectors)
    {
        double mib = limits.Values.MaxAnalysisMemoryMiB;
        return mib > 0 && AnalysisMemory.Upper(model, extraVectors) > (long)(mib * 1024 * 1024);
    }

    /// <summary>
    /// RESOURCE_EXHAUSTED when the estimated memory of the analysis exceeds the configured budget. Runs the symbolic
    /// analysis when the cheap bound is above the budget: call it inside the slot, with the analysis's token.
    /// </summary>
    public void CheckMemory(StructuralModel model, int extraVectors, CancellationToken ct = default)
    {
        double mib = limits.Values.MaxAnalysisMemoryMiB;
        if (mib <= 0) return;
        long budget = (long)(mib * 1024 * 1024);
        var estimate = AnalysisMemory.Of(model, budget, extraVectors, ct);
        if (estimate.Bytes > budget)
            throw RpcErrors.TooLarge("model", "analysis_memory",
                $"the analysis of this model needs about {estimate.Bytes / (1024.0 * 1024):F0} MiB ({estimate.FactorEntries} factor entries for {model.Dofs.FreeCount} free DOFs); this server allows {mib:F0} MiB per analysis");
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
            || (ex is InvalidOperationException && ex is not AnalysisInputException);
        if (endOfCall && (callOver || ex is OperationCanceledException or RpcException))
        {
            if (abort.IsCancellationRequested && !call.IsCancellationRequested)
                return new RpcException(new Status(StatusCode.Unavailable, "the server shut down before the analysis finished; retry on another instance"));
            if (deadline)
                return new RpcException(new Status(StatusCode.DeadlineExceeded, "the call's deadline expired before the analysis finished"));
            if (ex is RpcException rc) return rc;
            return new RpcException(new Status(StatusCode.Cancelled, "the call was cancelled"));
        }
        return ex switch
        {
            ModelValidationException v => RpcErrors.Invalid(v.Findings),
            MechanismException m => RpcErrors.Mechanism(m),
            AnalysisInputException a => RpcErrors.Input(a),
            _ => null,
        };
    }

    /// <summary>
    /// True when the call had a deadline and it has passed, or is due within <see cref="DeadlineSlack"/>: the client's
    /// timer starts before the server's (the grpc-timeout header is relative), so its reset can arrive first.
    /// </summary>
    private static bool DeadlinePassed(ServerCallContext context) =>
        context.Deadline != DateTime.MaxValue && context.Deadline <= DateTime.UtcNow + DeadlineSlack;

    private static readonly TimeSpan DeadlineSlack = TimeSpan.FromMilliseconds(200);

    public static StructuralModel BuildModel(StructureModel? proto, LoadCase? loads, Imperfection? imperfection = null)
    {
        var definition = ModelMapper.ToDefinition(proto, loads);
        var findings = ModelValidator.Validate(definition);
        if (findings.Any(f => f.Severity == FindingSeverity.Error)) throw RpcErrors.Invalid(findings);
        return StructuralModel.Create(ImperfectionMapper.Apply(definition, imperfection));
    }

    private static string Truncate(string? s, int max = 64) => LogText.Cut(s, max);
}
