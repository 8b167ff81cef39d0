using Grpc.AspNetCore.Server;
using Grpc.Core;
using PathService.Server.Telemetry;

namespace PathService.Server.Services;

/// <summary>
/// What an analysis gets once it holds its slot: one token that the caller's cancellation or deadline, the end of a
/// shutdown's grace period and the call's own time bound all cancel, and a way to write responses that cannot hold the
/// slot beyond that bound. The time bound is the analysis's time limit (the trace's wall-time limit, the sweep's time
/// limit, the server's cap) plus a short grace, so that an analysis that stops itself at its limit can still deliver
/// its last message; it counts from the moment the slot is taken and includes time spent waiting for the caller.
/// </summary>
public sealed class AnalysisCall : IDisposable
{
    private readonly ServerCallContext _context;
    private readonly PathServiceTelemetry _telemetry;
    private readonly string _rpc;
    private readonly CancellationTokenSource _bound = new();
    private readonly CancellationTokenSource _token;
    private readonly TimeSpan _stalledWriteLimit;
    private readonly long _started = System.Diagnostics.Stopwatch.GetTimestamp();

    /// <param name="rpc">Name of the RPC, the tag of the stalled-write counter.</param>
    /// <param name="context">The call.</param>
    /// <param name="abort">Cancelled by the caller (cancellation, deadline) and by the end of a shutdown's grace period.</param>
    /// <param name="limit">Time limit of the analysis (null = none: only the caller and shutdown end it).</param>
    /// <param name="stalledWriteLimit">Longest wait for the caller to accept one response (zero or less = only the time bound).</param>
    /// <param name="telemetry">Where stalled writes are counted.</param>
    public AnalysisCall(string rpc, ServerCallContext context, CancellationToken abort, TimeSpan? limit,
        TimeSpan stalledWriteLimit, PathServiceTelemetry telemetry)
    {
        _rpc = rpc;
        _context = context;
        _telemetry = telemetry;
        // Timers take at most about 49 days; a longer limit is no limit in practice.
        _stalledWriteLimit = stalledWriteLimit > TimeSpan.Zero && stalledWriteLimit < MaxTimer ? stalledWriteLimit : Timeout.InfiniteTimeSpan;
        Limit = limit;
        if (limit is { } l && l < MaxTimer)
        {
            Bound = l + Grace(l);
            _bound.CancelAfter(Bound.Value);
        }
        _token = CancellationTokenSource.CreateLinkedTokenSource(abort, _bound.Token);
    }

    private static readonly TimeSpan MaxTimer = TimeSpan.FromDays(40);

    /// <summary>Grace beyond the time limit: 5 % of it, between 1 s and 5 s.</summary>
    public static TimeSpan Grace(TimeSpan limit) => TimeSpan.FromSeconds(Math.Clamp(0.05 * limit.TotalSeconds, 1, 5));

    /// <summary>Cancelled by the caller, a shutdown's end of grace, or the time bound.</summary>
    public CancellationToken Token => _token.Token;

    /// <summary>The analysis's time limit; null when it has none.</summary>
    public TimeSpan? Limit { get; }

    /// <summary>Limit plus grace: the latest moment the call may still hold its slot.</summary>
    public TimeSpan? Bound { get; }

    /// <summary>What is left of the time limit (null when there is none): the limit the engine should still work to.</summary>
    public TimeSpan? Remaining => Limit is { } l ? l - System.Diagnostics.Stopwatch.GetElapsedTime(_started) : null;

    /// <summary>True once the time bound has passed.</summary>
    public bool TimeBoundReached => _bound.IsCancellationRequested;

    /// <summary>The status of a call ended by its time bound.</summary>
    public RpcException Exceeded(string what) => new(new Status(StatusCode.DeadlineExceeded,
        $"{what} exceeded its time limit of {Limit?.TotalSeconds:G4} s and was stopped"));

    /// <summary>
    /// Writes one response. A write completes when the transport accepts it; a caller that stops reading blocks it
    /// under HTTP/2 flow control. When the time bound passes or the write waits longer than the stalled-write limit,
    /// and the write still does not complete within a short moment (a client that reads clears a pending write in
    /// milliseconds), the caller is taken to have stalled: the call is aborted (the HTTP/2 stream is reset) so that the
    /// slot is released, the stalled write is counted (<c>pathservice.writes.stalled</c>) and an
    /// <see cref="RpcException"/> ends the analysis. A shutdown does not cut writes: the caller still gets its status
    /// (UNAVAILABLE), and the host's shutdown timeout ends whatever is left.
    /// </summary>
    public async Task WriteAsync<T>(IServerStreamWriter<T> stream, T message)
    {
        // The write obeys the caller's own token only: cancelling a pending write for a server-side reason would make
        // grpc-dotnet reset the stream without the status the caller should see.
        var write = stream.WriteAsync(message, _context.CancellationToken);
        if (write.IsCompleted) { await write; return; }
        bool timedOut;
        try
        {
            await write.WaitAsync(_stalledWriteLimit, _bound.Token);
            return;
        }
        catch (TimeoutException) { timedOut = true; }
        catch (OperationCanceledException) when (_bound.IsCancellationRequested && !_context.CancellationToken.IsCancellationRequested) { timedOut = false; }
        try
        {
            await write.WaitAsync(StallConfirmation);
            return; // the caller was reading after all; a time bound now ends the call with its status
        }
        catch (TimeoutException) { }
        _telemetry.RecordStalledWrite(_rpc);
        // The write stays pending until the stream is reset; observe its failure so it is not reported as unobserved.
        _ = write.ContinueWith(static t => _ = t.Exception, CancellationToken.None, TaskContinuationOptions.OnlyOnFaulted | TaskContinuationOptions.ExecuteSynchronously, TaskScheduler.Default);
        _token.Cancel();
        Abort();
        // Resetting the stream cancels the call's token, which completes the pending write; wait for that (briefly)
        // so that the write's cancellation callback runs while the request is still alive.
        await Task.WhenAny(write, Task.Delay(TimeSpan.FromSeconds(2))).ConfigureAwait(false);
        if (timedOut)
            throw new RpcException(new Status(StatusCode.Aborted, $"the caller stopped reading: a response waited {_stalledWriteLimit.TotalSeconds:G4} s to be accepted, so the call was ended"));
        throw new RpcException(new Status(StatusCode.DeadlineExceeded,
            $"the caller stopped reading and the call reached its time limit of {Limit?.TotalSeconds:G4} s, so it was ended"));
    }

    /// <summary>How long a pending write may still take, once its limit has passed, before the caller counts as stalled.</summary>
    public static readonly TimeSpan StallConfirmation = TimeSpan.FromMilliseconds(500);

    /// <summary>Resets the HTTP/2 stream; outside a real HTTP call (in-process tests) there is nothing to reset.</summary>
    private void Abort()
    {
        try { _context.GetHttpContext().Abort(); }
        catch (InvalidOperationException) { }
    }

    public void Dispose()
    {
        _token.Dispose();
        _bound.Dispose();
    }
}

/// <summary>An analysis ready to run once it holds a slot, with its time limit (null = none).</summary>
public sealed record PreparedAnalysis(Func<AnalysisCall, Task<string>> Run, TimeSpan? TimeLimit);
