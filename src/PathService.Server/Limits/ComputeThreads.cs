using PathService.Engine.Sparse;

namespace PathService.Server.Limits;

/// <summary>
/// Runs the CPU-bound part of an analysis on a thread of its own, off the thread pool that serves Kestrel, gRPC and
/// health, and counts that thread against the process-wide <see cref="ComputeBudget"/> while it runs. The engine's
/// parallel kernels borrow their helper threads from the same budget, so all analyses together run at most
/// <see cref="ComputeBudget.Capacity"/> compute threads when the slots do not exceed it.
/// </summary>
public static class ComputeThreads
{
    /// <summary>Runs <paramref name="body"/> on a dedicated thread; the task completes with its result or exception.</summary>
    public static Task<T> Run<T>(Func<T> body) =>
        Task.Factory.StartNew(() =>
        {
            using var _ = ComputeBudget.EnterAnalysis();
            return body();
        }, CancellationToken.None, TaskCreationOptions.LongRunning | TaskCreationOptions.DenyChildAttach, TaskScheduler.Default);

    /// <summary>Runs <paramref name="body"/> on a dedicated thread.</summary>
    public static Task Run(Action body) => Run<bool>(() => { body(); return true; });
}
