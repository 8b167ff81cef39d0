namespace PathService.Engine.Sparse;

/// <summary>
/// Process-wide budget of compute threads shared by every analysis running in the process. Each analysis thread
/// counts one unit while it runs (<see cref="EnterAnalysis"/>); a parallel kernel borrows its helper threads from what
/// is left and runs on fewer threads (down to the caller alone) when the budget is spent. With as many analysis slots
/// as the budget, the process never runs more compute threads than the budget, whatever the slot count up to it;
/// beyond it, each analysis still has its own thread and no helpers.
/// </summary>
/// <remarks>
/// Results do not depend on how many helpers a kernel gets: the parallel kernels split their work by a schedule that
/// depends on the matrix structure only, and sums are added in task order (see <c>WorkerTeam</c>), so an analysis gives
/// the same bits alone or under full load.
/// </remarks>
public static class ComputeBudget
{
    private static int _capacity = Math.Max(1, Environment.ProcessorCount);
    private static int _inUse;

    /// <summary>Compute threads the process may run at once (default: the processor count; at least 1).</summary>
    public static int Capacity
    {
        get => Volatile.Read(ref _capacity);
        set => Volatile.Write(ref _capacity, Math.Max(1, value));
    }

    /// <summary>Analysis threads plus borrowed helpers running now.</summary>
    public static int InUse => Volatile.Read(ref _inUse);

    /// <summary>Counts the calling analysis thread against the budget until the returned handle is disposed.</summary>
    public static IDisposable EnterAnalysis()
    {
        Interlocked.Increment(ref _inUse);
        return new Occupied();
    }

    /// <summary>Borrows up to <paramref name="wanted"/> helper threads without waiting; returns how many were granted (0 when the budget is spent).</summary>
    internal static int TryBorrow(int wanted)
    {
        if (wanted <= 0) return 0;
        while (true)
        {
            int used = Volatile.Read(ref _inUse);
            int granted = Math.Min(wanted, Capacity - used);
            if (granted <= 0) return 0;
            if (Interlocked.CompareExchange(ref _inUse, used + granted, used) == used) return granted;
        }
    }

    /// <summary>Gives back helpers borrowed by <see cref="TryBorrow"/>.</summary>
    internal static void Return(int helpers)
    {
        if (helpers > 0) Interlocked.Add(ref _inUse, -helpers);
    }

    private sealed class Occupied : IDisposable
    {
        private int _done;
        public void Dispose()
        {
            if (Interlocked.Exchange(ref _done, 1) == 0) Interlocked.Decrement(ref _inUse);
        }
    }
}
