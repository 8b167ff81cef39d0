using PathService.Engine.Continuation;
using PathService.Engine.Sparse;

namespace PathService.Engine.Stability;

/// <summary>Trial states: equilibrium on the hyperplane at t, their factorisation, the crossing eigenpair and its rates.</summary>
internal sealed partial class CriticalPointLocator
{
    /// <summary>Equilibrium on the hyperplane at t, its tangent's inertia, μ, mode and rates; null when no state was found.</summary>
    /// <param name="from">A state whose path tangent predicts the one at t (Newton's step); null: interpolate between the bracket's ends.</param>
    private State? Trial(double t, State lo, State hi, State? from, double[] modeGuess, double muScale, CancellationToken ct)
    {
        _trials++;
        var u = new double[lo.U.Length];
        if (!TrySolveAt(t, lo, hi, from, u, out double lambda, ct)) return null;
        if (sys.Refactor(u) == LdlStatus.ZeroPivot)
        {
            _factored = null;
            return new State(t, u, lambda, -1, 0.0, modeGuess, 0);
        }
        var s = new State(t, u, lambda, sys.Factor.NegativePivotCount, 0, modeGuess, 0);
        _factored = s;
        // The path tangent's solve first: checked, it also vouches for the factor before the eigenvalue iterations use it
        // without the check (EquilibriumSystem.EigenSolve).
        var predictor = PathPredictor();
        // μ is needed to 10⁻⁶ of itself (it steers the root finding) and, near the root, to 10⁻¹² of its values at the
        // step ends: more would only cost inverse-iteration solves.
        (s.Mu, s.Mode) = Crossing(modeGuess, CrossingSign(s.Count, lo.Count, hi.Count), TrialTolerance, 1e-12 * muScale, TrialToleranceFor(from));
        Rates(s, predictor);
        return s;
    }

    private State FactorAndDescribe(double t, double[] u, double lambda, int count, double[]? guess, double tolerance, int sign)
    {
        if (sys.Refactor(u) == LdlStatus.ZeroPivot)
        {
            _factored = null;
            return new State(t, u, lambda, count, 0.0, guess ?? new double[sys.FreeCount], 0);
        }
        return Describe(t, u, lambda, count, guess, tolerance, sign, null);
    }

    /// <summary>
    /// The sign of the crossing eigenvalue at a state with <paramref name="count"/> negative pivots in a bracket with
    /// counts <paramref name="countLo"/> and <paramref name="countHi"/>: negative on the side with more negative pivots
    /// (it has crossed there), positive on the other; 0 (nearest zero of either sign) for a count of neither end.
    /// </summary>
    private static int CrossingSign(int count, int countLo, int countHi) =>
        count == Math.Max(countLo, countHi) ? -1 : count == Math.Min(countLo, countHi) ? 1 : 0;

    /// <summary>
    /// The eigenpair of the factorised tangent that crosses zero in the bracket: nearest zero among the eigenvalues of
    /// the crossing's sign at this state (Lanczos on K⁻¹), so that a soft mode of the other sign that does not cross is
    /// never tracked; inverse iteration when the Krylov space holds no eigenvalue of that sign.
    /// </summary>
    private (double, double[]) Crossing(double[]? guess, int sign, double tolerance, double absoluteTolerance, Func<double, double>? toleranceFor = null)
    {
        var (mu, mode, found) = NearNullMode.NearestOfSign(sys, sign, guess, _basis, tolerance: tolerance, toleranceFor: toleranceFor);
        return found ? (mu, mode) : NearNullMode.Compute(sys, guess, tolerance: tolerance, absoluteTolerance: absoluteTolerance, mixStart: true);
    }

    private State Describe(double t, double[] u, double lambda, int count, double[]? guess, double tolerance, int sign, double[]? predictor)
    {
        predictor ??= PathPredictor();
        var (mu, mode) = Crossing(guess, sign, tolerance, 0);
        var s = new State(t, u, lambda, count, mu, mode, 0);
        Rates(s, predictor);
        _factored = s;
        return s;
    }

    private static int SignOf(double x) => double.IsFinite(x) ? Math.Sign(x) : 0;

    /// <summary>K⁻¹F_ref with the factorisation in place (a checked solve).</summary>
    private double[] PathPredictor()
    {
        var v = new double[sys.FreeCount];
        sys.Factor.Solve(sys.ReferenceFree, v);
        return v;
    }

    /// <summary>
    /// Rates along the chord at the factorised state s: the path tangent satisfies K u' = λ' F_ref and u'·d = ‖d‖², so
    /// u' = λ' K⁻¹F_ref with λ' = ‖d‖² / (d·K⁻¹F_ref) (λ' = Δλ of the step when the chord holds λ only); the sign of λ'
    /// (0 when the chord holds λ only: no turn possible in t); and μ' = φᵀ(dK/dt)φ for the unit mode φ, dK/dt from the
    /// tangents at u ± h u' (central difference; element-agnostic, no factorisation).
    /// </summary>
    /// <param name="predictor">K⁻¹F_ref at s when the caller has it; otherwise one solve.</param>
    private void Rates(State s, double[]? predictor)
    {
        var v = _work;
        if (predictor is not null) Array.Copy(predictor, v, v.Length);
        else sys.Factor.Solve(sys.ReferenceFree, v);
        double dot = EquilibriumSystem.Dot(v, _d);
        s.Slope = _w != 0 ? 0 : SignOf(dot);
        double rate = _w != 0 ? _dl : _dNorm * _dNorm / dot;
        if (!double.IsFinite(rate)) return;
        var tangent = new double[v.Length];
        for (int e = 0; e < v.Length; e++) tangent[e] = rate * v[e];
        double plus = ModeStiffness(s.U, tangent, RateStep, s.Mode), minus = ModeStiffness(s.U, tangent, -RateStep, s.Mode);
        double muRate = (plus - minus) / (2 * RateStep);
        if (!double.IsFinite(muRate)) return;
        s.LambdaRate = rate;
        s.PathTangent = tangent;
        s.MuRate = muRate;
    }

    /// <summary>φᵀK(u + h u')φ: the tangent assembled at a state along the path, applied to the mode.</summary>
    private double ModeStiffness(double[] u, double[] tangent, double h, double[] mode)
    {
        Array.Copy(u, _uh, _uh.Length);
        sys.AddFree(_uh, tangent, h);
        sys.Assembler.Tangent(_uh, _kv);
        sys.Assembler.Multiply(_kv, mode, _kphi);
        return EquilibriumSystem.Dot(mode, _kphi);
    }

    /// <summary>
    /// Whether the kept factorisation is nearly singular for a trial at t: its tracked eigenvalue is under a tenth of the
    /// change μ'·(t − t_kept) expected on the way (e.g. the factorisation of a point just located in a neighbouring part of
    /// the step). Modified Newton multiplies the error along that mode by |1 − μ(t)/μ_kept| per iteration, so it would
    /// diverge; full Newton is started at once instead of after the failed iterations.
    /// </summary>
    private static bool NearlySingularFor(State kept, double t) =>
        double.IsFinite(kept.Mu) && double.IsFinite(kept.MuRate) && Math.Abs(kept.Mu) < 0.1 * Math.Abs(kept.MuRate * (t - kept.T));

    private bool TrySolveAt(double t, State lo, State hi, State? from, double[] u, out double lambda, CancellationToken ct)
    {
        var c = new StepConstraint(ConstraintKind.Hyperplane, Normal: _d, NormalLoad: _dl, LoadWeight: _w);
        double tolerance = Math.Max(Math.Min(controls.ResidualTolerance, 1e-10) * _residualScale, 1e-14);
        var dU = _dU;
        // Modified Newton first: the factorisation in place is the tangent at the last trial (or a bracket end), a state
        // close to this one, so a few solves usually replace several factorisations. Full Newton from the same predictor
        // when that does not converge (the critical mode's stiffness may change sign between the two states).
        Predict(t, lo, hi, from, u, dU, out lambda, out double dLam);
        double firstResidual = sys.Residual(u, lambda, _work);
        if (_factored is not null && sys.Factor.Status != LdlStatus.ZeroPivot && !NearlySingularFor(_factored, t))
        {
            var outcome = corrector.Correct(u, ref lambda, dU, ref dLam, c, ModifiedNewtonIterations, tolerance, ct, keepFactor: true);
            if (outcome == CorrectorOutcome.Converged) return true;
            if (outcome == CorrectorOutcome.Cancelled) return false;
            // Modified Newton that ran out of iterations while still converging leaves a better start than the
            // prediction; after divergence (or a non-finite state) start again from the prediction.
            bool progressed = corrector.Reason == CutReason.MaxIterations && double.IsFinite(corrector.ResidualNorm) && corrector.ResidualNorm < firstResidual;
            if (!progressed) Predict(t, lo, hi, from, u, dU, out lambda, out dLam);
        }
        _factored = null;
        var full = corrector.Correct(u, ref lambda, dU, ref dLam, c, controls.MaxIterations, tolerance, ct);
        return full == CorrectorOutcome.Converged;
    }

    /// <summary>
    /// Predictor on the hyperplane at t, with the increment dU measured from u_lo: along the path tangent of
    /// <paramref name="from"/> (second order, Newton's step), or linear interpolation between the bracket's end states,
    /// which lie on the hyperplanes at t_lo and t_hi, so either prediction lies on the one at t. (A cubic Hermite
    /// interpolant between the ends saved factorisations on isolated crossings but failed to converge inside dense
    /// clusters, where the path is nearly singular along several modes; not used.)
    /// </summary>
    private void Predict(double t, State lo, State hi, State? from, double[] u, double[] dU, out double lambda, out double dLam)
    {
        if (from?.PathTangent is { } tangent)
        {
            double dt = t - from.T;
            Array.Copy(from.U, u, u.Length);
            sys.AddFree(u, tangent, dt);
            lambda = from.Lambda + dt * from.LambdaRate;
        }
        else
        {
            double f = (t - lo.T) / (hi.T - lo.T);
            for (int i = 0; i < u.Length; i++) u[i] = lo.U[i] + f * (hi.U[i] - lo.U[i]);
            lambda = lo.Lambda + f * (hi.Lambda - lo.Lambda);
        }
        var fullOf = sys.Model.Dofs.FullOf;
        for (int e = 0; e < dU.Length; e++) dU[e] = u[fullOf[e]] - lo.U[fullOf[e]];
        dLam = lambda - lo.Lambda;
    }
}
