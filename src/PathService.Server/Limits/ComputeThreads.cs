using System.Collections.Concurrent;
using PathService.Engine.Sparse;

namespace PathService.Server.Limits;

/// <summary>
/// Runs the CPU-bound part of an analysis on a compute thread of its own, off the thread pool that serves Kestrel,
/// gRPC and health, and counts that thread against the process-wide <see cref="ComputeBudget"/> while it runs. The
/// engine's parallel kernels borrow their helper threads from the same budget, so all analyses together run at most
/// <see cref="ComputeBudget.Capacity"/> compute threads when the slots do not exceed it.
/// </summary>
/// <remarks>
/// Compute threads are kept for reuse (a new thread per call costs more than a whole trace of a small model): a thread
/// that finishes its work waits up to <see cref="IdleTimeout"/> for the next one, then ends. A call that finds no idle
/// thread starts a new one, so work never waits for a thread; the analysis slots bound how many run at once.
/// </remarks>
public static class ComputeThreads
{
    /// <summary>How long an idle compute thread waits for new work before it ends.</summary>
    public static readonly TimeSpan IdleTimeout = TimeSpan.FromSeconds(30);

    private static readonly ConcurrentStack<Worker> Idle = new();

    /// <summary>Runs <paramref name="body"/> on a compute thread; the task completes with its result or exception.</summary>
    public static Task<T> Run<T>(Func<T> body)
    {
        var done = new TaskCompletionSource<T>(TaskCreationOptions.RunContinuationsAsynchronously);
        // The caller's execution context (current span, log scope) flows to the compute thread.
        var context = ExecutionContext.Capture();
        void Work()
        {
            try
            {
                using var _ = ComputeBudget.EnterAnalysis();
                done.TrySetResult(body());
            }
            catch (Exception ex) { done.TrySetException(ex); }
        }
        Action item = context is null ? Work : () => ExecutionContext.Run(context, static w => ((Action)w!)(), (Action)Work);
        while (Idle.TryPop(out var worker))
            if (worker.TryAssign(item)) return done.Task;
        var thread = new Thread(() => new Worker().Loop(item)) { IsBackground = true, Name = "pathservice-compute" };
        thread.Start();
        return done.Task;
    }

    /// <summary>Runs <paramref name="body"/> on a compute thread.</summary>
    public static Task Run(Action body) => Run<bool>(() => { body(); return true; });

    /// <summary>Compute threads waiting for work now.</summary>
    public static int IdleCount => Idle.Count;

    private sealed class Worker
    {
        private const int Waiting = 0, Assigned = 1, Retired = 2;
        private readonly SemaphoreSlim _go = new(0);
        private int _state = Assigned;
        private Action? _item;

        /// <summary>Hands an idle worker its next item; false when it has retired meanwhile (then take another).</summary>
        public bool TryAssign(Action item)
        {
            if (Interlocked.CompareExchange(ref _state, Assigned, Waiting) != Waiting) return false;
            _item = item;
            _go.Release();
            return true;
        }

        public void Loop(Action first)
        {
            var item = first;
            while (true)
            {
                item();
                Volatile.Write(ref _state, Waiting);
                Idle.Push(this);
                if (!_go.Wait(IdleTimeout))
                {
                    // Retire unless a caller assigned work at the same moment (then its signal is on the way). A retired
                    // worker left in the stack is skipped by TryAssign.
                    if (Interlocked.CompareExchange(ref _state, Retired, Waiting) == Waiting) return;
                    _go.Wait();
                }
                item = _item!;
                _item = null;
            }
        }
    }
}
