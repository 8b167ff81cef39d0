namespace PathService.Server.Limits;

/// <summary>
/// Caps the number of CPU-bound analyses running at once, with a short bounded queue in front: a caller beyond the
/// cap waits for a slot (at most <see cref="QueueTimeout"/>) if fewer than <see cref="QueueCapacity"/> callers are
/// waiting already, otherwise it is turned away at once. Both refusals become RESOURCE_EXHAUSTED with a retry delay.
/// </summary>
public sealed class AnalysisGate(int capacity, int queueCapacity = 0, TimeSpan queueTimeout = default) : IDisposable
{
    private readonly SemaphoreSlim _slots = new(capacity, capacity);
    private int _active;
    private int _queued;

    public int Capacity { get; } = capacity;
    public int QueueCapacity { get; } = Math.Max(0, queueCapacity);
    public TimeSpan QueueTimeout { get; } = queueTimeout;

    /// <summary>Analyses currently holding a slot.</summary>
    public int Active => Volatile.Read(ref _active);

    /// <summary>Callers currently waiting for a slot.</summary>
    public int Queued => Volatile.Read(ref _queued);

    /// <summary>Takes a slot without waiting; the returned lease frees it. Null when every slot is taken.</summary>
    public Lease? TryEnter() => _slots.Wait(0) ? Take() : null;

    /// <summary>
    /// Takes a slot, waiting in the bounded queue if need be. Returns the lease, or the reason of a refusal.
    /// Cancellation of <paramref name="ct"/> while waiting throws <see cref="OperationCanceledException"/>.
    /// </summary>
    public async ValueTask<(Lease? Lease, GateRefusal Refusal)> EnterAsync(CancellationToken ct)
    {
        if (_slots.Wait(0)) return (Take(), GateRefusal.None);
        if (QueueCapacity == 0 || QueueTimeout <= TimeSpan.Zero) return (null, GateRefusal.QueueFull);
        if (Interlocked.Increment(ref _queued) > QueueCapacity)
        {
            Interlocked.Decrement(ref _queued);
            return (null, GateRefusal.QueueFull);
        }
        try
        {
            return await _slots.WaitAsync(QueueTimeout, ct).ConfigureAwait(false)
                ? (Take(), GateRefusal.None)
                : (null, GateRefusal.QueueTimeout);
        }
        finally { Interlocked.Decrement(ref _queued); }
    }

    private Lease Take()
    {
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

public enum GateRefusal { None, QueueFull, QueueTimeout }
