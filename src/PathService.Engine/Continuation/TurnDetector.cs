namespace PathService.Engine.Continuation;

/// <summary>
/// Finds turns of the monitored displacement components along one branch: a component whose increment changes sign
/// between two consecutive steps has an extreme value near the middle point (a snap-back seen in that component, or
/// any other reversal). The turn is located on the quadratic through the three points in arc length s:
/// v(s) = v₀ + a(s − s₀) + b(s − s₀)(s − s₁), v'(s*) = 0, and λ(s*) from the quadratic through the same points.
/// </summary>
internal sealed class TurnDetector(TraceSession s)
{
    /// <summary>Increments smaller than this fraction of the step's largest displacement increment are round-off, not motion.</summary>
    private const double Significant = 1e-9;

    private readonly List<(int Index, double S, double Lambda, double[] V)> _last = [];
    private double[]? _lastIncrement;
    private double _lastScale;

    /// <summary>Records the branch's starting point (no turn can be judged yet).</summary>
    public void Start(BranchState b)
    {
        _last.Clear();
        _lastIncrement = null;
        Add(b);
    }

    /// <summary>Records the branch's new converged point and returns the turns found at the point before it (null: none).</summary>
    public List<DisplacementTurn>? Check(BranchState b, double[] stepFree)
    {
        if (s.Monitored.Length == 0) return null;
        double scale = 0;
        foreach (double v in stepFree) scale = Math.Max(scale, Math.Abs(v));
        if (_last.Count == 0) { Add(b); return null; }
        var prev = _last[^1];
        var now = s.Monitored.Select(d => b.U[d]).ToArray();
        var increment = new double[now.Length];
        for (int i = 0; i < now.Length; i++) increment[i] = now[i] - prev.V[i];
        List<DisplacementTurn>? found = null;
        if (_lastIncrement is not null && _last.Count >= 2)
        {
            var p0 = _last[^2];
            for (int i = 0; i < now.Length; i++)
            {
                double a = _lastIncrement[i], c = increment[i];
                if (Math.Sign(a) * Math.Sign(c) >= 0) continue;
                if (Math.Abs(a) <= Significant * _lastScale || Math.Abs(c) <= Significant * scale) continue;
                var (value, lambda, sStar) = Locate(p0.S, prev.S, b.ArcLength, p0.V[i], prev.V[i], now[i], p0.Lambda, prev.Lambda, b.Lambda);
                bool firstHalf = sStar <= prev.S;
                (found ??= []).Add(new DisplacementTurn(++s.Turns, i, value, lambda, firstHalf ? p0.Index : prev.Index, firstHalf ? prev.Index : b.LastPointIndex) { Branch = b.Id });
            }
        }
        _lastIncrement = increment;
        _lastScale = scale;
        Add(b);
        return found;
    }

    private void Add(BranchState b)
    {
        _last.Add((b.LastPointIndex, b.ArcLength, b.Lambda, s.Monitored.Select(d => b.U[d]).ToArray()));
        if (_last.Count > 2) _last.RemoveAt(0);
    }

    /// <summary>Extremum of the quadratic through (s0, v0), (s1, v1), (s2, v2), kept within [s0, s2]; λ there by the same interpolation.</summary>
    internal static (double Value, double Lambda, double S) Locate(double s0, double s1, double s2, double v0, double v1, double v2,
        double l0, double l1, double l2)
    {
        double a = (v1 - v0) / (s1 - s0);
        double b = ((v2 - v1) / (s2 - s1) - a) / (s2 - s0);
        // v'(s) = a + b(2s − s0 − s1) = 0.
        double sStar = b != 0 ? 0.5 * (s0 + s1 - a / b) : s1;
        if (!double.IsFinite(sStar)) sStar = s1;
        sStar = Math.Clamp(sStar, s0, s2);
        double value = v0 + a * (sStar - s0) + b * (sStar - s0) * (sStar - s1);
        double la = (l1 - l0) / (s1 - s0);
        double lb = ((l2 - l1) / (s2 - s1) - la) / (s2 - s0);
        double lambda = l0 + la * (sStar - s0) + lb * (sStar - s0) * (sStar - s1);
        return (value, lambda, sStar);
    }
}
