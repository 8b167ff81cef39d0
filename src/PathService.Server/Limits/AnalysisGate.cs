namespace PathService.Server.Limits;

/// <summary>
/// Caps the number of CPU-bound analyses running at once. A caller beyond the cap is turned away at once
/// (RESOURCE_EXHAUSTED with a retry delay) instead of queueing: a queued trace would hold a connection and memory
/// while its deadline runs out.
/// </summary>
public sealed class AnalysisGate(int capacity) : IDisposable
{
    private readonly SemaphoreSlim _slots = new(capacity, capacity);
    private int _active;

    public int Capacity { get; } = capacity;

    /// <summary>Analyses currently holding a slot.</summary>
    public int Active => Volatile.Read(ref _active);

    /// <summary>Takes a slot without waiting; the returned lease frees it. Null when every slot is taken.</summary>
    public Lease? TryEnter()
    {
        if (!_slots.Wait(0)) return null;
        Interlocked.Increment(ref _active);
        return new Lease(this);
    }

    public void Dispose() => _slots.Dispose();

    public sealed class Lease : IDisposable
    {
        private AnalysisGate? _gate;
        internal Lease(AnalysisGate gate) => _gate = gate;

        public void Dispose()
        {
            var gate = Interlocked.Exchange(ref _gate, null);
            if (gate is null) return;
            Interlocked.Decrement(ref gate._active);
            gate._slots.Release();
        }
    }
}
