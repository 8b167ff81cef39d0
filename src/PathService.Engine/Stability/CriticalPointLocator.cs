using PathService.Engine.Continuation;
using PathService.Engine.Sparse;

namespace PathService.Engine.Stability;

/// <summary>
/// Locates a critical point bracketed by two converged path points a and b whose tangents differ in their number of
/// negative pivots. States between them are found by re-solving equilibrium on hyperplanes normal to the displacement
/// chord d = u_b − u_a at fraction t (Riks' constraint, linear, so no complex roots), starting from the secant
/// predictor. The eigenvalue of the tangent nearest zero, μ(t), changes sign in the bracket; its root is found by
/// the Illinois variant of regula falsi (Dowell and Jarratt 1971), kept inside the bracket by the inertia at each trial.
/// </summary>
internal sealed class CriticalPointLocator(EquilibriumSystem sys, Corrector corrector, SolverControls controls)
{
    public sealed record Result(double LoadFactor, double[] Displacement, double Eigenvalue, double[] ModeFree, bool Located, double Tolerance);

    /// <summary>Trials first try modified Newton with the tangent in place (the last trial's) for this many iterations.</summary>
    private const int ModifiedNewtonIterations = 12;

    /// <summary>Relative change of μ that ends inverse iteration at the bracket ends.</summary>
    private const double EndTolerance = 1e-6;

    /// <param name="factorAtB">True when the system's factorisation is already the tangent at u_b (saves one).</param>
    public Result Locate(double[] ua, double lambdaA, int na, double[] ub, double lambdaB, int nb, double[]? modeGuess, CancellationToken ct,
        bool factorAtB = false)
    {
        int n = sys.FreeCount;
        var fullOf = sys.Model.Dofs.FullOf;
        var d = new double[n];
        for (int e = 0; e < n; e++) d[e] = ub[fullOf[e]] - ua[fullOf[e]];
        double dl = lambdaB - lambdaA;
        double dd = EquilibriumSystem.Dot(d, d);
        // Hold the displacement projection on the chord, (u − u_a)·d = t‖d‖²: within one converged step the path is
        // monotone in that projection, whereas λ is not near a limit point. λ alone only when the chord has no displacement.
        double w = dd > 0 ? 0.0 : 1.0;

        // At the bracket ends μ only sets the scale and the first regula falsi trial: a few digits are enough.
        var (muB, modeB) = factorAtB && sys.Factor.Status != LdlStatus.ZeroPivot
            ? NearNullMode.Compute(sys, modeGuess, tolerance: EndTolerance, mixStart: true) : EigenAt(ub, modeGuess);
        var (muA, _) = EigenAt(ua, modeB);
        double tLo = 0, tHi = 1, fLo = muA, fHi = muB;
        double lambdaLo = lambdaA, lambdaHi = lambdaB;
        // Converged when the eigenvalue nearest zero is this small against its values at the bracket ends.
        double muScale = Math.Abs(muA) + Math.Abs(muB);
        // μ is about linear in t near its root, so a relative μ of ε puts t within ~ε of t*: λ_cr is then within
        // ε·|Δλ| at a bifurcation and within ε² at a limit point (an extremum of λ).
        double muStop = Math.Min(1e-6, 1e3 * controls.CriticalPointTolerance) * muScale;
        int side = 0, sinceHalved = 0;
        double width = 1;
        double[] bestU = (double[])ub.Clone();
        double bestLambda = lambdaB, bestMu = muB, runnerUpLambda = lambdaA;
        double[] bestMode = modeB;
        bool located = false;
        var u = new double[ua.Length];
        var dU = new double[n];

        for (int iter = 0; iter < 80 && !ct.IsCancellationRequested; iter++)
        {
            // Illinois regula falsi on μ(t); bisection when the bracket has not halved in three tries.
            double t = 0.5 * (tLo + tHi);
            if (sinceHalved < 3 && Math.Sign(fLo) != Math.Sign(fHi))
            {
                double tf = tLo + fLo / (fLo - fHi) * (tHi - tLo);
                if (tf > tLo && tf < tHi) t = tf;
            }
            if (!TrySolveAt(t, ua, lambdaA, d, dl, w, u, dU, out double lambda, ct))
            {
                t = 0.5 * (tLo + tHi);
                if (!TrySolveAt(t, ua, lambdaA, d, dl, w, u, dU, out lambda, ct)) break;
            }
            var status = sys.Refactor(u);
            int inertia = status == LdlStatus.ZeroPivot ? -1 : sys.Factor.NegativePivotCount;
            // μ is only needed to a small fraction of its values at the bracket ends to steer regula falsi.
            var (mu, mode) = status == LdlStatus.ZeroPivot ? (0.0, bestMode) : NearNullMode.Compute(sys, bestMode, absoluteTolerance: 1e-10 * muScale);
            if (Math.Abs(mu) <= Math.Abs(bestMu))
            {
                runnerUpLambda = bestLambda;
                bestU = (double[])u.Clone(); bestLambda = lambda; bestMu = mu; bestMode = mode;
            }
            if (status == LdlStatus.ZeroPivot || Math.Abs(mu) <= muStop) { located = true; break; }
            if (inertia == na)
            {
                tLo = t; fLo = mu;
                if (side == -1) fHi *= 0.5; // Illinois: halve the retained end's value when the same end moves twice
                side = -1;
            }
            else
            {
                tHi = t; fHi = mu;
                if (side == 1) fLo *= 0.5;
                side = 1;
            }
            if (inertia == na) lambdaLo = lambda; else lambdaHi = lambda;
            if (tHi - tLo <= 0.5 * width) { width = tHi - tLo; sinceHalved = 0; } else sinceHalved++;
            // Where λ is monotone across the bracket (a bifurcation on a rising path), λ_cr lies between its ends.
            bool monotone = (lambdaLo - lambda) * (lambda - lambdaHi) >= 0 && Math.Abs(lambdaHi - lambdaLo) > 0;
            if (monotone && Math.Abs(lambdaHi - lambdaLo) <= controls.CriticalPointTolerance * Math.Max(1.0, Math.Abs(lambda)))
            {
                located = true;
                runnerUpLambda = inertia == na ? lambdaHi : lambdaLo;
                break;
            }
            if (tHi - tLo < 1e-12) { located = true; break; }
        }
        double achieved = Math.Abs(bestLambda - runnerUpLambda) / Math.Max(1.0, Math.Abs(bestLambda));
        located &= achieved <= Math.Max(controls.CriticalPointTolerance, 1e-12) || Math.Abs(bestMu) <= muStop;
        return new Result(bestLambda, bestU, bestMu, bestMode, located, achieved);
    }

    private (double Mu, double[] Mode) EigenAt(double[] u, double[]? guess)
    {
        if (sys.Refactor(u) == LdlStatus.ZeroPivot) return (0.0, guess ?? new double[sys.FreeCount]);
        return NearNullMode.Compute(sys, guess, tolerance: EndTolerance, mixStart: true);
    }

    private bool TrySolveAt(double t, double[] ua, double lambdaA, double[] d, double dl, double w,
        double[] u, double[] dU, out double lambda, CancellationToken ct)
    {
        var c = new StepConstraint(ConstraintKind.Hyperplane, Normal: d, NormalLoad: dl, LoadWeight: w);
        double tolerance = Math.Min(controls.ResidualTolerance, 1e-10);
        // Modified Newton first: the factorisation in place is the tangent at the last trial (or a bracket end), a state
        // close to this one, so a few solves usually replace several factorisations. Full Newton from the same predictor
        // when that does not converge (the critical mode's stiffness may change sign between the two states).
        Predict(t, ua, lambdaA, d, dl, u, dU, out lambda, out double dLam);
        var outcome = corrector.Correct(u, ref lambda, dU, ref dLam, c, ModifiedNewtonIterations, tolerance, ct, keepFactor: true);
        if (outcome == CorrectorOutcome.Converged) return true;
        if (outcome == CorrectorOutcome.Cancelled) return false;
        Predict(t, ua, lambdaA, d, dl, u, dU, out lambda, out dLam);
        outcome = corrector.Correct(u, ref lambda, dU, ref dLam, c, controls.MaxIterations, tolerance, ct);
        return outcome == CorrectorOutcome.Converged;
    }

    /// <summary>Secant predictor: the point at fraction t of the chord from a to b.</summary>
    private void Predict(double t, double[] ua, double lambdaA, double[] d, double dl, double[] u, double[] dU, out double lambda, out double dLam)
    {
        Array.Copy(ua, u, ua.Length);
        for (int e = 0; e < dU.Length; e++) dU[e] = t * d[e];
        sys.AddFree(u, dU);
        lambda = lambdaA + t * dl;
        dLam = t * dl;
    }
}
