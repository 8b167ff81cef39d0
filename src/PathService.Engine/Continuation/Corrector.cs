using PathService.Engine.Sparse;

namespace PathService.Engine.Continuation;

/// <summary>The extra equation that fixes the load-factor correction δλ of each Newton iteration.</summary>
internal enum ConstraintKind { Load, Displacement, ArcLength, Hyperplane }

/// <summary>
/// Constraint data. Load: δλ = 0. Displacement: the increment of free equation <see cref="ControlEquation"/> is held.
/// ArcLength: ΔuᵀΔu + ψ²Δλ²F_refᵀF_ref = Δs² (Crisfield 1981, "A fast incremental/iterative solution procedure that
/// handles snap-through", Computers &amp; Structures 13). Hyperplane: Δu·n + wΔλ·n_λ held at the predictor's value
/// (Riks 1979, "An incremental approach to the solution of snapping and buckling problems", Int. J. Solids Struct. 15).
/// </summary>
internal sealed record StepConstraint(ConstraintKind Kind, int ControlEquation = -1, double ArcLength = 0, double PsiSquared = 0,
    double[]? Normal = null, double NormalLoad = 0, double LoadWeight = 0);

internal enum CorrectorOutcome { Converged, Cut, Cancelled }

/// <summary>
/// Full Newton-Raphson corrector for r(u, λ) = 0 with one constraint equation, using the two-solution
/// (bordering) scheme: K δu_r = −r, K δu_t = F_ref, δu = δu_r + δλ δu_t (Batoz and Dhatt 1979).
/// Divergence (growing residual, non-finite values, complex arc-length roots, a singular tangent) is returned
/// as a cut, never as a NaN in the state.
/// </summary>
internal sealed class Corrector(EquilibriumSystem sys)
{
    private readonly double[] _r = new double[sys.FreeCount];
    private readonly double[] _dur = new double[sys.FreeCount];
    private readonly double[] _dut = new double[sys.FreeCount];
    private readonly double[] _tmp = new double[sys.FreeCount];

    public int Iterations { get; private set; }
    public double ResidualNorm { get; private set; }
    public CutReason Reason { get; private set; }
    public string Detail { get; private set; } = "";

    /// <summary>
    /// Iterates from the predicted state (u, λ) with accumulated step increment (dU, dλ) until the residual converges.
    /// u, λ, dU and dλ are updated in place.
    /// </summary>
    public CorrectorOutcome Correct(double[] u, ref double lambda, double[] dU, ref double dLam, StepConstraint c,
        int maxIterations, double tolerance, CancellationToken ct, bool keepFactor = false)
    {
        Iterations = 0;
        double norm = sys.Residual(u, lambda, _r);
        ResidualNorm = norm;
        if (double.IsNaN(norm)) return Fail(CutReason.NonFiniteValue, "non-finite residual at the predicted state");
        if (norm <= tolerance * sys.LoadNorm(lambda)) return CorrectorOutcome.Converged;
        // A kept factorisation that has an exactly zero pivot cannot solve: a cut, never an exception.
        if (keepFactor && sys.Factor.Status == LdlStatus.ZeroPivot)
            return Fail(CutReason.SingularTangent, "the tangent kept for modified Newton is exactly singular");
        double first = norm, previous = double.PositiveInfinity, beforePrevious = double.PositiveInfinity;
        double scale = sys.LoadNorm(lambda);

        for (int it = 1; it <= maxIterations; it++)
        {
            if (ct.IsCancellationRequested) return CorrectorOutcome.Cancelled;
            Iterations = it;
            // keepFactor: modified Newton with the factorisation already in place (the last converged point's tangent).
            if (!keepFactor && sys.Refactor(u) == LdlStatus.ZeroPivot)
                return Fail(CutReason.SingularTangent, "exactly singular tangent during iteration");
            for (int e = 0; e < _r.Length; e++) _dur[e] = -_r[e];
            double dl = 0;
            if (c.Kind != ConstraintKind.Load)
            {
                // Both right-hand sides in one pass over the factor (the solves are memory-bound). With a kept
                // factorisation K⁻¹F_ref does not change between iterations: solved once, then one right-hand side
                // (Solve2 gives bit for bit what two single solves give, so the iterates are the same).
                if (keepFactor && it > 1) sys.Factor.Solve(_dur);
                else
                {
                    Array.Copy(sys.ReferenceFree, _dut, _dut.Length);
                    sys.Factor.Solve2(_dur, _dut);
                }
                if (!TryLoadCorrection(c, dU, dLam, out dl)) return Fail(CutReason.ComplexRoots, "the arc-length constraint has no real root");
            }
            else sys.Factor.Solve(_dur);
            // δu = δu_r + δλ δu_t, applied to the state and to the step increment.
            for (int e = 0; e < _tmp.Length; e++)
            {
                double d = _dur[e] + dl * (c.Kind == ConstraintKind.Load ? 0.0 : _dut[e]);
                _tmp[e] = d;
                dU[e] += d;
            }
            sys.AddFree(u, _tmp);
            lambda += dl;
            dLam += dl;

            norm = sys.Residual(u, lambda, _r);
            ResidualNorm = norm;
            if (double.IsNaN(norm) || !double.IsFinite(lambda)) return Fail(CutReason.NonFiniteValue, "non-finite residual or load factor");
            if (norm <= tolerance * sys.LoadNorm(lambda)) return CorrectorOutcome.Converged;
            // Divergence: residual far beyond the load scale, or growing three times in a row above its start.
            if (norm > 1e8 * Math.Max(first, scale) || (it >= 4 && norm > previous && previous > beforePrevious && norm > first))
                return Fail(CutReason.ResidualGrowth, $"residual grew to {norm:G3} (started at {first:G3})");
            beforePrevious = previous;
            previous = norm;
        }
        return Fail(CutReason.MaxIterations, $"no convergence in {maxIterations} iterations (residual {norm:G3})");
    }

    private bool TryLoadCorrection(StepConstraint c, double[] dU, double dLam, out double dl)
    {
        dl = 0;
        switch (c.Kind)
        {
            case ConstraintKind.Displacement:
                // Keep the controlled component's increment: δu_r[c] + δλ δu_t[c] = 0.
                dl = -_dur[c.ControlEquation] / _dut[c.ControlEquation];
                return double.IsFinite(dl);
            case ConstraintKind.Hyperplane:
            {
                double num = EquilibriumSystem.Dot(_dur, c.Normal!);
                double den = EquilibriumSystem.Dot(_dut, c.Normal!) + c.LoadWeight * c.NormalLoad;
                dl = -num / den;
                return double.IsFinite(dl);
            }
            case ConstraintKind.ArcLength:
                return ArcLengthRoot(c, dU, dLam, out dl);
            default:
                return true;
        }
    }

    /// <summary>
    /// Crisfield's quadratic a δλ² + b δλ + c = 0 for ‖Δu + δu_r + δλ δu_t‖² + ψ²(Δλ+δλ)²F² = Δs², root chosen by the
    /// smallest angle between the new and the previous step increment.
    /// </summary>
    private bool ArcLengthRoot(StepConstraint c, double[] dU, double dLam, out double dl)
    {
        double f2 = c.PsiSquared * sys.ReferenceNormSquared;
        double tt = 0, vt = 0, vv = 0, ut = 0, uv = 0;
        for (int e = 0; e < dU.Length; e++)
        {
            double v = dU[e] + _dur[e];
            tt += _dut[e] * _dut[e];
            vt += v * _dut[e];
            vv += v * v;
            ut += dU[e] * _dut[e];
            uv += dU[e] * v;
        }
        double a = tt + f2;
        double b = 2 * (vt + dLam * f2);
        double cc = vv + dLam * dLam * f2 - c.ArcLength * c.ArcLength;
        double disc = b * b - 4 * a * cc;
        dl = 0;
        if (!(a > 0) || !double.IsFinite(disc)) return false;
        if (disc < 0)
        {
            if (disc < -1e-10 * b * b) return false;
            disc = 0;
        }
        double sq = Math.Sqrt(disc);
        double l1 = (-b + sq) / (2 * a), l2 = (-b - sq) / (2 * a);
        // cos θ ∝ (Δu + δu_r + δλ δu_t)·Δu + ψ²(Δλ+δλ)Δλ F².
        double cos1 = uv + l1 * ut + (dLam + l1) * dLam * f2;
        double cos2 = uv + l2 * ut + (dLam + l2) * dLam * f2;
        dl = cos1 >= cos2 ? l1 : l2;
        return double.IsFinite(dl);
    }

    private CorrectorOutcome Fail(CutReason reason, string detail)
    {
        Reason = reason;
        Detail = detail;
        return CorrectorOutcome.Cut;
    }
}
