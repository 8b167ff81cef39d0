using PathService.Engine.Continuation;
using PathService.Engine.Sparse;

namespace PathService.Engine.Stability;

/// <summary>The next trial (Newton, Hermite), the Newton-corrected state and mode, and the error estimates of a location.</summary>
internal sealed partial class CriticalPointLocator
{
    /// <summary>Newton's point t − μ/μ' from a state with a known rate, when it lies strictly inside the bracket.</summary>
    /// <summary>
    /// Newton's point t − μ/μ' from a state with a known rate, when it lies strictly inside the bracket; refined by the
    /// root of the cubic Hermite interpolant of μ through this state and <paramref name="prior"/> (values and rates at
    /// both: error of order (t*−t_p)²(t*−t_s)² against Newton's (t*−t_s)², so a sequence that needed three Newton trials
    /// usually needs two), when that root stays near Newton's point (within half of Newton's step) and in the bracket.
    /// </summary>
    private static double? NewtonPoint(State s, State lo, State hi, State? prior = null)
    {
        if (!Rated(s)) return null;
        double t = s.T - s.Mu / s.MuRate;
        if (!(double.IsFinite(t) && t > lo.T && t < hi.T)) return null;
        if (prior is not null && Rated(prior) && prior.T != s.T && HermiteRoot(prior, s, t) is { } tc
            && tc > lo.T && tc < hi.T && Math.Abs(tc - t) <= 0.5 * Math.Abs(t - s.T))
            return tc;
        return t;
    }

    private static bool Rated(State s) => double.IsFinite(s.MuRate) && s.MuRate != 0 && double.IsFinite(s.Mu) && s.PathTangent is not null;

    /// <summary>Root near <paramref name="start"/> of the cubic Hermite interpolant of μ with values and rates at p and s
    /// (Newton's method on the cubic, a few steps); null when it does not settle.</summary>
    private static double? HermiteRoot(State p, State s, double start)
    {
        double t0 = p.T, h = s.T - p.T;
        double f0 = p.Mu, f1 = s.Mu, d0 = p.MuRate * h, d1 = s.MuRate * h; // rates per unit of x = (t − t0)/h
        double x = (start - t0) / h;
        for (int i = 0; i < 8; i++)
        {
            double x2 = x * x, x3 = x2 * x;
            double value = f0 * (2 * x3 - 3 * x2 + 1) + d0 * (x3 - 2 * x2 + x) + f1 * (-2 * x3 + 3 * x2) + d1 * (x3 - x2);
            double slope = f0 * (6 * x2 - 6 * x) + d0 * (3 * x2 - 4 * x + 1) + f1 * (-6 * x2 + 6 * x) + d1 * (3 * x2 - 2 * x);
            if (slope == 0 || !double.IsFinite(slope)) return null;
            double dx = value / slope;
            x -= dx;
            if (Math.Abs(dx) <= 1e-15 * Math.Max(1.0, Math.Abs(x))) return double.IsFinite(x) ? t0 + x * h : null;
        }
        return null;
    }

    /// <summary>
    /// Estimated |λ(t*) − λ_trial| from the trial's Newton correction δt = −μ/μ': |λ'δt| plus the remainder of Newton's
    /// step (c_μ δt²/|μ'| and μ''s assumed relative error, times |λ'|) plus c_λ δt², where c_μ and c_λ are the observed
    /// departures of μ and λ at the trial from the Taylor line of the previous state (½|f''| over that interval), doubled.
    /// Null when the trial or the previous state has no rate, or the root leaves the bracket.
    /// </summary>
    private static double? NewtonEstimate(State trial, State previous, State lo, State hi)
    {
        if (trial == previous || !double.IsFinite(trial.MuRate) || trial.MuRate == 0 || !double.IsFinite(trial.LambdaRate)) return null;
        if (!double.IsFinite(previous.MuRate) || !double.IsFinite(previous.LambdaRate) || !double.IsFinite(previous.Mu)) return null;
        double dt = -trial.Mu / trial.MuRate;
        double tStar = trial.T + dt;
        if (!double.IsFinite(tStar) || tStar < lo.T || tStar > hi.T) return null;
        double h = trial.T - previous.T;
        if (h == 0) return null;
        double cMu = Math.Abs(trial.Mu - previous.Mu - previous.MuRate * h) / (h * h);
        double cLambda = Math.Abs(trial.Lambda - previous.Lambda - previous.LambdaRate * h) / (h * h);
        double tError = 2 * cMu * dt * dt / Math.Abs(trial.MuRate) + RateError * Math.Abs(dt);
        double estimate = Math.Abs(trial.LambdaRate) * (Math.Abs(dt) + tError) + 2 * cLambda * dt * dt;
        return double.IsFinite(estimate) ? estimate : null;
    }

    /// <summary>
    /// The state reached from a trial by its Newton correction δt = −μ/μ' along the path tangent, u + δt u', λ + δt λ'
    /// (an equilibrium state to O(δt²), no factorisation), and its estimated λ error: the remainder of Newton's step
    /// and μ''s assumed error, times |λ'| (as in <see cref="NewtonEstimate"/>, without the step itself), c_λ δt², and the
    /// λ shift of the corrected state's own residual. Null when the trial or the previous state has no rate, or the
    /// corrected point leaves the bracket.
    /// </summary>
    private (State?, double) Corrected(State trial, State previous, State lo, State hi)
    {
        if (trial == previous || trial.PathTangent is null || NewtonEstimate(trial, previous, lo, hi) is null) return (null, double.PositiveInfinity);
        double dt = -trial.Mu / trial.MuRate;
        double h = trial.T - previous.T;
        double cMu = Math.Abs(trial.Mu - previous.Mu - previous.MuRate * h) / (h * h);
        double cLambda = Math.Abs(trial.Lambda - previous.Lambda - previous.LambdaRate * h) / (h * h);
        double tError = 2 * cMu * dt * dt / Math.Abs(trial.MuRate) + RateError * Math.Abs(dt);
        double estimate = Math.Abs(trial.LambdaRate) * tError + 2 * cLambda * dt * dt;
        var u = (double[])trial.U.Clone();
        sys.AddFree(u, trial.PathTangent, dt);
        double lambda = trial.Lambda + dt * trial.LambdaRate;
        // The corrected state is an equilibrium state to O(δt²) only: its residual's shift of λ (judged as at the end of
        // Resolve) is part of its error, so a correction too long to keep equilibrium is not taken.
        double rn = sys.Residual(u, lambda, _work);
        bool turns = lo.Slope != 0 && hi.Slope != 0 && lo.Slope != hi.Slope;
        double shift = turns
            ? Math.Abs(EquilibriumSystem.Dot(trial.Mode, _work)) / Math.Max(Math.Abs(EquilibriumSystem.Dot(trial.Mode, sys.ReferenceFree)), 1e-300)
            : rn / Math.Sqrt(sys.ReferenceNormSquared);
        estimate += shift;
        if (!double.IsFinite(estimate)) return (null, double.PositiveInfinity);
        var s = new State(trial.T + dt, u, lambda, trial.Count, trial.Mu + dt * trial.MuRate, trial.Mode, trial.Slope)
        {
            Origin = trial, MuRate = trial.MuRate, LambdaRate = trial.LambdaRate, PathTangent = trial.PathTangent,
        };
        return (s, estimate);
    }

    /// <summary>
    /// The mode at a corrected state to O(δt²): φ + δt φ', where differentiating (K − μ)φ = 0 along the path gives
    /// (K − μ)φ' = −(K' − μ')φ with φ'·φ = 0, solved with the trial's factorisation (K ≈ K − μ near the root); K'φ by the
    /// same central difference as μ'. Keeps the mode, and what is computed from it (sensitivities, the branch switch),
    /// as accurate as the corrected state.
    /// </summary>
    private double[] CorrectedMode(State corrected)
    {
        var trial = corrected.Origin!;
        var phi = trial.Mode;
        if (_factored != trial || trial.PathTangent is null || sys.Factor.Status == LdlStatus.ZeroPivot) return phi;
        int n = phi.Length;
        var plus = new double[n];
        ModeStiffness(trial.U, trial.PathTangent, RateStep, phi);
        Array.Copy(_kphi, plus, n);
        ModeStiffness(trial.U, trial.PathTangent, -RateStep, phi);
        var w = _work;
        for (int e = 0; e < n; e++) w[e] = (plus[e] - _kphi[e]) / (2 * RateStep) - trial.MuRate * phi[e];
        sys.Factor.Solve(w);
        double along = EquilibriumSystem.Dot(phi, w);
        double dt = corrected.T - trial.T;
        var mode = new double[n];
        for (int e = 0; e < n; e++) mode[e] = phi[e] - dt * (w[e] - along * phi[e]);
        double norm = Math.Sqrt(EquilibriumSystem.Dot(mode, mode));
        if (!(norm > 0) || !double.IsFinite(norm)) return phi;
        for (int e = 0; e < n; e++) mode[e] /= norm;
        return mode;
    }

    private double Alignment(double[] mode) =>
        Math.Abs(EquilibriumSystem.Dot(mode, sys.ReferenceFree)) / Math.Max(1e-300, Math.Sqrt(EquilibriumSystem.Dot(mode, mode) * sys.ReferenceNormSquared));

    /// <summary>
    /// On a path that is monotone in t, ‖u_hi − u_lo‖ ≈ (t_hi − t_lo)‖d‖ up to the path's curvature. A distance many
    /// times larger (with a narrow bracket) means the two ends lie on different crossings of the path with the hyperplanes.
    /// </summary>
    private bool Folded(State lo, State hi)
    {
        double width = hi.T - lo.T;
        if (width > 0.25) return false;
        double dist = 0;
        for (int i = 0; i < lo.U.Length; i++) { double x = hi.U[i] - lo.U[i]; dist += x * x; }
        // The floor: near a bifurcation equilibrium on a hyperplane is ill-conditioned along the mode (a residual r moves u by
        // ~ φ·r/μ there), so two converged states a hair apart in t may differ by far more than the hair; a fold moves
        // the crossing by a visible part of the step.
        return Math.Sqrt(dist) > 20 * width * _dNorm + 1e-6 * _dNorm;
    }

    /// <summary>
    /// Estimated |λ(t*) − λ_best|: t* from a quadratic model of μ(t) through the three latest states (Newton from the
    /// regula falsi root), λ(t*) from a quadratic model of λ(t) through the same states, plus the change of λ between the
    /// linear and the quadratic prediction of t* as the model's own uncertainty. At a limit point λ is stationary, so
    /// this is ~ ½|λ''|δt², not the bracket width.
    /// </summary>
    private static double ErrorEstimate(List<State> history, State lo, State hi, State best)
    {
        // An end whose μ was never computed (the step's start, described by its slope only): no model.
        if (!double.IsFinite(lo.Mu) || !double.IsFinite(hi.Mu)) return double.PositiveInfinity;
        if (Math.Sign(lo.Mu) == Math.Sign(hi.Mu) || lo.Mu == hi.Mu)
            return Math.Max(Math.Abs(lo.Lambda - best.Lambda), Math.Abs(hi.Lambda - best.Lambda));
        double tLin = lo.T + lo.Mu / (lo.Mu - hi.Mu) * (hi.T - lo.T);
        // The three latest distinct states (the latest trials are the nearest to the root).
        var pts = history.DistinctBy(p => p.T).TakeLast(3).ToArray();
        if (pts.Length < 3) return double.PositiveInfinity;
        var (m0, m1, m2) = Quadratic(pts, p => p.Mu);
        var (l0, l1, l2) = Quadratic(pts, p => p.Lambda);
        double Eval(double c0, double c1, double c2, double t) => c0 + c1 * (t - pts[0].T) + c2 * (t - pts[0].T) * (t - pts[1].T);
        double Deriv(double c1, double c2, double t) => c1 + c2 * ((t - pts[0].T) + (t - pts[1].T));
        double tq = tLin;
        for (int i = 0; i < 4; i++)
        {
            double dm = Deriv(m1, m2, tq);
            if (dm == 0 || !double.IsFinite(dm)) break;
            tq -= Eval(m0, m1, m2, tq) / dm;
        }
        if (!double.IsFinite(tq) || tq < lo.T || tq > hi.T) tq = tLin;
        double lambdaQ = Eval(l0, l1, l2, tq), lambdaL = Eval(l0, l1, l2, tLin);
        return Math.Abs(lambdaQ - best.Lambda) + Math.Abs(lambdaQ - lambdaL);
    }

    /// <summary>Newton divided differences of f over three states: f ≈ c0 + c1(t − t0) + c2(t − t0)(t − t1).</summary>
    private static (double, double, double) Quadratic(State[] p, Func<State, double> f)
    {
        double f01 = (f(p[1]) - f(p[0])) / (p[1].T - p[0].T);
        double f12 = (f(p[2]) - f(p[1])) / (p[2].T - p[1].T);
        double f012 = (f12 - f01) / (p[2].T - p[0].T);
        return (f(p[0]), f01, f012);
    }
}
