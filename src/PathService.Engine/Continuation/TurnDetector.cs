namespace PathService.Engine.Continuation;

/// <summary>
/// Finds turns of the monitored displacement components along one branch: a component whose increment changes sign
/// between two consecutive steps has an extreme value near the middle point (a snap-back seen in that component, or
/// any other reversal). A first estimate comes from the quadratic through the three points in arc length s:
/// v(s) = v₀ + a(s − s₀) + b(s − s₀)(s − s₁), v'(s*) = 0. It is then refined on the path itself: equilibrium states
/// on hyperplanes normal to the chord of the half-step that holds s* (Riks' constraint, as for critical points), and
/// successive parabolic interpolation of v over the chord fraction (Brent 1973, "Algorithms for Minimization without
/// Derivatives", ch. 5 (from memory)) until the extreme value settles. The solves reuse the factorisation in place
/// (modified Newton), so a turn usually costs no factorisation; full Newton when that does not converge.
/// </summary>
internal sealed class TurnDetector(TraceSession s)
{
    /// <summary>Parabolic refinement steps at most (each one equilibrium solve on a hyperplane).</summary>
    private const int RefineSteps = 6;

    /// <summary>Modified Newton iterations per refinement solve (the tangent of the new point is kept).</summary>
    private const int ModifiedIterations = 40;
    /// <summary>Increments smaller than this fraction of the step's largest displacement increment are round-off, not motion.</summary>
    private const double Significant = 1e-9;

    private readonly List<(int Index, double S, double Lambda, double[] V, double[] U)> _last = [];
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
        // The refinement below reads _last[^2].U and _last[^1].U; Add reuses the oldest buffer only after they are done with.
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
                var (ua, la, sa, ub, lb, sb) = firstHalf ? (p0.U, p0.Lambda, p0.S, prev.U, prev.Lambda, prev.S) : (prev.U, prev.Lambda, prev.S, b.U, b.Lambda, b.ArcLength);
                if (Refine(ua, la, ub, lb, (sStar - sa) / (sb - sa), s.Monitored[i], maximum: a > 0) is { } refined) (value, lambda) = refined;
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
        // Full states of the two latest points, in two reused buffers: no allocation per point once both exist.
        double[] u;
        if (_last.Count == 2) { u = _last[0].U; _last.RemoveAt(0); }
        else u = new double[b.U.Length];
        Array.Copy(b.U, u, u.Length);
        _last.Add((b.LastPointIndex, b.ArcLength, b.Lambda, s.Monitored.Select(d => b.U[d]).ToArray(), u));
    }

    /// <summary>
    /// The extreme value of component <paramref name="dof"/> between two converged states: equilibrium on the hyperplane
    /// (u − u_a)·d = t‖d‖² (d the chord), successive parabolic interpolation on v(t) from the first guess t₀. Null when an
    /// equilibrium state cannot be found (the quadratic estimate is then kept).
    /// </summary>
    private (double Value, double Lambda)? Refine(double[] ua, double la, double[] ub, double lb, double t0, int dof, bool maximum)
    {
        var sys = s.Sys;
        int n = sys.FreeCount;
        var fullOf = sys.Model.Dofs.FullOf;
        var d = new double[n];
        for (int e = 0; e < n; e++) d[e] = ub[fullOf[e]] - ua[fullOf[e]];
        if (EquilibriumSystem.Dot(d, d) == 0) return null;
        var c = new StepConstraint(ConstraintKind.Hyperplane, Normal: d, NormalLoad: lb - la, LoadWeight: 0);
        double tolerance = Math.Min(s.Controls.ResidualTolerance, 1e-10);
        // Samples (t, v, λ) along the chord: the two ends and the trials.
        var samples = new List<(double T, double V, double L)> { (0, ua[dof], la), (1, ub[dof], lb) };
        var u = new double[ua.Length];
        var dU = new double[n];
        double t = Math.Clamp(t0, 0.02, 0.98);
        double? lastValue = null;
        for (int k = 0; k < RefineSteps; k++)
        {
            for (int i = 0; i < u.Length; i++) u[i] = ua[i] + t * (ub[i] - ua[i]);
            for (int e = 0; e < n; e++) dU[e] = t * d[e];
            double lambda = la + t * (lb - la), dLam = lambda - la;
            // Modified Newton with the tangent in place (the latest, a nearby state's): solves only, no factorisation;
            // full Newton from the same prediction when that does not converge (e.g. across a limit point).
            var outcome = s.Corrector.Correct(u, ref lambda, dU, ref dLam, c, ModifiedIterations, tolerance, s.Ct, keepFactor: true);
            if (outcome == CorrectorOutcome.Cut)
            {
                for (int i = 0; i < u.Length; i++) u[i] = ua[i] + t * (ub[i] - ua[i]);
                for (int e = 0; e < n; e++) dU[e] = t * d[e];
                lambda = la + t * (lb - la);
                dLam = lambda - la;
                outcome = s.Corrector.Correct(u, ref lambda, dU, ref dLam, c, s.Controls.MaxIterations, tolerance, s.Ct);
            }
            if (outcome != CorrectorOutcome.Converged) return lastValue is null ? null : Best();
            samples.Add((t, u[dof], lambda));
            // Parabola through the three samples with the most extreme values (they bracket the turn).
            var three = Extreme();
            var (value, _, tv) = Locate(three[0].T, three[1].T, three[2].T, three[0].V, three[1].V, three[2].V, three[0].L, three[1].L, three[2].L);
            lastValue = value;
            // v is flat at its extreme, so settle t (which λ needs), not v.
            if (samples.Any(x => Math.Abs(x.T - tv) < 1e-7)) break;
            t = tv;
        }
        return Best();

        (double, double) Best()
        {
            var three = Extreme();
            var (value, _, tv) = Locate(three[0].T, three[1].T, three[2].T, three[0].V, three[1].V, three[2].V, three[0].L, three[1].L, three[2].L);
            // λ(t) is smooth and steep where v is flat: interpolate it through the samples nearest to t*.
            var near = samples.OrderBy(x => Math.Abs(x.T - tv)).Take(3).OrderBy(x => x.T).ToArray();
            double la2 = (near[1].L - near[0].L) / (near[1].T - near[0].T);
            double lb2 = ((near[2].L - near[1].L) / (near[2].T - near[1].T) - la2) / (near[2].T - near[0].T);
            double lambda = near[0].L + la2 * (tv - near[0].T) + lb2 * (tv - near[0].T) * (tv - near[1].T);
            return (value, lambda);
        }

        // The most extreme sample and its neighbours in t: they bracket the turn.
        (double T, double V, double L)[] Extreme()
        {
            var sorted = samples.OrderBy(x => x.T).ToArray();
            int best = 0;
            for (int i = 1; i < sorted.Length; i++)
                if (maximum ? sorted[i].V > sorted[best].V : sorted[i].V < sorted[best].V) best = i;
            int first = Math.Clamp(best - 1, 0, sorted.Length - 3);
            return sorted[first..(first + 3)];
        }
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
