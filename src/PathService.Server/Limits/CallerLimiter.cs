using System.Collections.Concurrent;

namespace PathService.Server.Limits;

/// <summary>Concurrent analyses per caller (API key name): a caller at its cap is turned away at once, without queueing.</summary>
public sealed class CallerLimiter
{
    private readonly ConcurrentDictionary<string, int> _running = new(StringComparer.Ordinal);

    /// <summary>Analyses the caller runs now.</summary>
    public int Running(string caller) => _running.TryGetValue(caller, out int n) ? n : 0;

    /// <summary>Counts one more analysis for the caller; null (nothing counted) when it already runs <paramref name="max"/>.</summary>
    public IDisposable? TryEnter(string caller, int max)
    {
        while (true)
        {
            int current = _running.GetOrAdd(caller, 0);
            if (current >= max) return null;
            if (_running.TryUpdate(caller, current + 1, current)) return new Release(this, caller);
        }
    }

    private void Leave(string caller)
    {
        while (true)
        {
            int current = _running[caller];
            if (_running.TryUpdate(caller, current - 1, current)) return;
        }
    }

    private sealed class Release(CallerLimiter owner, string caller) : IDisposable
    {
        private int _done;
        public void Dispose()
        {
            if (Interlocked.Exchange(ref _done, 1) == 0) owner.Leave(caller);
        }
    }
}
