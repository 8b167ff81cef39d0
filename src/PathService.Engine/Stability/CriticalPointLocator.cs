using PathService.Engine.Continuation;
using PathService.Engine.Sparse;

namespace PathService.Engine.Stability;

/// <summary>
/// Resolves one converged step a → b whose tangents differ in their number of negative pivots into its critical
/// points. States between a and b are found by re-solving equilibrium on hyperplanes normal to the displacement chord
/// d = u_b − u_a at fraction t (Riks' constraint, linear, so no complex roots). In a bracket [t_lo, t_hi] the eigenvalue
/// of the tangent nearest zero, μ(t), is driven to its root by Newton's method on the path: μ'(t) = φᵀ(dK/dt)φ (the
/// derivative of a simple eigenvalue of a symmetric matrix, e.g. P. Lancaster, "On eigenvalues of matrices dependent on
/// a parameter", Numer. Math. 6, 1964 (from memory)), dK/dt by a central difference of tangents along the path tangent
/// u' = λ'K⁻¹F_ref, so no element needs a second derivative. Together with equilibrium on the hyperplane this is the
/// extended system of Wriggers and Simo (IJNME 30, 1990) restricted to the primary path, which keeps it regular at a
/// symmetric bifurcation (see docs/theory.md, "Critical points"). The eigenvalue tracked is the one that crosses: of the
/// crossing's sign, nearest zero (Lanczos on K⁻¹), never a soft mode of the other sign. Where Newton's step leaves the bracket, the Illinois variant of regula
/// falsi (Dowell and Jarratt 1971) or bisection takes over; the inertia of every trial keeps the root bracketed, and a
/// trial whose count lies outside the bracket's two counts splits the bracket (bisection on the inertia), so that each
/// reported point accounts for its own change of the count. A change of k at one λ (no trial separates it) is one
/// bifurcation of multiplicity k, with k modes from block inverse iteration. The point is located when the estimated
/// λ error meets the asked tolerance.
/// </summary>
internal sealed class CriticalPointLocator(EquilibriumSystem sys, Corrector corrector, SolverControls controls)
{
    /// <summary>One resolved critical point of the step.</summary>
    /// <param name="LoadTurns">True when λ turns back across the bracket (dλ/dt changes sign: a limit point), false when it passes on, null when unknown.</param>
    public sealed record Result(double LoadFactor, double[] Displacement, double Eigenvalue, double[][] ModesFree,
        int NegativeBefore, int NegativeAfter, bool Located, double Tolerance, string Note, bool? LoadTurns)
    {
        /// <summary>The chord of the step could not order the states (the path turns back within it): shorten the step.</summary>
        public bool Folded { get; init; }
        /// <summary>No equilibrium state was found on one of the step's hyperplanes: a shorter step may resolve the point.</summary>
        public bool NoTrialState { get; init; }
        /// <summary>The factorised trial state the located state was reached from by the last Newton correction (null: none).</summary>
        public double[]? FactoredNear { get; init; }
    }

    /// <summary>Trials first try modified Newton with the tangent in place (the last trial's) for this many iterations.</summary>
    private const int ModifiedNewtonIterations = 12;

    /// <summary>Relative residual of the Lanczos Ritz pair (or change of μ of the inverse-iteration fallback) at the bracket
    /// ends: μ there only sets the scale and Newton's first step, whose own error is far larger than the ~10⁻⁶ relative
    /// error of a Ritz value at this residual (it falls as the residual squared).</summary>
    private const double EndTolerance = 1e-3;

    /// <summary>Trials per step over all its brackets: a bound on the work, never reached on a well-posed step.</summary>
    private const int MaxTrials = 120;

    /// <summary>Location iterates until the estimated λ error is this fraction of the asked tolerance.</summary>
    private const double Target = 1.0 / 3.0;

    private sealed class State(double t, double[] u, double lambda, int count, double mu, double[] mode, int slope)
    {
        /// <summary>dμ/dt and dλ/dt along the path at this state, and the path tangent du/dt (free DOFs); NaN/null when not known.</summary>
        public double MuRate = double.NaN, LambdaRate = double.NaN;
        public double[]? PathTangent;
        /// <summary>For a state reached by the last Newton correction along the path tangent: the factorised trial it came from.</summary>
        public State? Origin;
        public double T = t;
        public double[] U = u;
        public double Lambda = lambda;
        public int Count = count;
        public double Mu = mu;
        public double[] Mode = mode;
        /// <summary>Sign of dλ/dt along the chord at this state (0 when not known).</summary>
        public int Slope = slope;
    }

    private double[] _d = [];
    // Work vectors of one Locate call (free DOFs), reused by every trial: the slope solve and residuals, and the increment.
    private double[] _work = [], _dU = [];
    private double _dl, _w, _dNorm, _residualScale = 1.0;
    // Work of the eigenvalue rate: a tangent at a perturbed state, the state itself (full) and K φ.
    private double[] _kv = [], _uh = [], _kphi = [];

    /// <summary>Step of the central difference of the tangent along the path, in t (a fraction of the step): truncation
    /// ~h² of μ''' and rounding ~ε‖K‖/h, both far below what Newton needs.</summary>
    private const double RateStep = 1e-4;

    /// <summary>Relative error assumed of the differenced μ' in the error estimate (truncation and rounding above, with a margin).</summary>
    private const double RateError = 1e-6;

    /// <summary>Relative residual of the Lanczos Ritz pair at a trial near the root (see <see cref="NearNullMode.NearestOfSign"/>).</summary>
    private const double TrialTolerance = 1e-6;

    /// <summary>
    /// The Lanczos tolerance at a Newton trial as a function of its μ: the mode's error (about the residual) enters μ' to
    /// first order, and an error ε in μ' moves the next Newton point by ε|δt|, δt = μ/μ' (rate of the state the trial came
    /// from); a hundredth of |δt| keeps that below the step's own quadratic error, so far from the root a few digits do,
    /// and next to it <see cref="TrialTolerance"/> applies (the trials the location rests on). Null for other trials.
    /// </summary>
    private static Func<double, double>? TrialToleranceFor(State? from)
    {
        if (from is null || !double.IsFinite(from.MuRate) || from.MuRate == 0) return null;
        double rate = Math.Abs(from.MuRate);
        return mu => Math.Clamp(0.01 * Math.Abs(mu) / rate, TrialTolerance, 1e-3);
    }

    /// <summary>Trials that went to Newton's point, and trials in all (for the tests and the bench).</summary>
    public int NewtonTrials { get; private set; }
    public int Trials => _trials;
    private int _trials;
    private readonly List<double[]> _basis = []; // Lanczos work space, reused by every eigenvalue of the call
    private double _blockAbsolute; // absolute convergence of block inverse iteration: 10⁻¹² of μ's scale over the step
    private State? _factored; // the state the factorisation in place belongs to (null: none of ours)

    /// <summary>The displacement vector whose tangent the factorisation in place holds after <c>Locate</c> (null: none
    /// of the located states'); a caller compares it by reference with a result's <c>Displacement</c>.</summary>
    public double[]? FactoredDisplacement => _factored?.U;

    /// <param name="factorAtB">True when the system's factorisation is already the tangent at u_b (saves one).</param>
    /// <param name="predictorA">K⁻¹F_ref at u_a (free DOFs) when the caller has it: the end a is then never factorised
    /// unless a fallback needs its eigenvalue.</param>
    /// <param name="predictorB">K⁻¹F_ref at u_b, with <paramref name="factorAtB"/>: saves the solve for the path tangent there.</param>
    public List<Result> Locate(double[] ua, double lambdaA, int na, double[] ub, double lambdaB, int nb, double[]? modeGuess, CancellationToken ct,
        bool factorAtB = false, double[]? predictorA = null, double[]? predictorB = null)
    {
        int n = sys.FreeCount;
        var fullOf = sys.Model.Dofs.FullOf;
        _d = new double[n];
        _work = new double[n];
        _dU = new double[n];
        _kv = new double[sys.Values.Length];
        _uh = new double[sys.Model.Dofs.FullCount];
        _kphi = new double[n];
        for (int e = 0; e < n; e++) _d[e] = ub[fullOf[e]] - ua[fullOf[e]];
        _dl = lambdaB - lambdaA;
        // Hold the displacement projection on the chord, (u − u_a)·d = t‖d‖²: within one converged step the path is
        // monotone in that projection, whereas λ is not near a limit point. λ alone only when the chord has no displacement.
        _dNorm = Math.Sqrt(EquilibriumSystem.Dot(_d, _d));
        _w = _dNorm > 0 ? 0.0 : 1.0;
        _trials = 0;

        // At the bracket ends μ only sets the scale and the first regula falsi trial: a few digits are enough.
        var b = factorAtB && sys.Factor.Status != LdlStatus.ZeroPivot
            ? Describe(1, (double[])ub.Clone(), lambdaB, nb, modeGuess, EndTolerance, CrossingSign(nb, na, nb), predictorB)
            : FactorAndDescribe(1, (double[])ub.Clone(), lambdaB, nb, modeGuess, EndTolerance, CrossingSign(nb, na, nb));
        // The end a is described without a factorisation when its predictor is given (its slope is all the start needs):
        // Newton starts from b. Otherwise, or when b has no rate, a is factorised as before.
        State a;
        if (predictorA is not null && double.IsFinite(b.MuRate) && b.MuRate != 0)
        {
            a = new State(0, (double[])ua.Clone(), lambdaA, na, double.NaN, b.Mode, 0);
            a.Slope = _w != 0 ? 0 : SignOf(EquilibriumSystem.Dot(predictorA, _d));
        }
        else a = FactorAndDescribe(0, (double[])ua.Clone(), lambdaA, na, b.Mode, EndTolerance, CrossingSign(na, na, nb));
        double muScale = double.IsFinite(a.Mu) ? Math.Abs(a.Mu) + Math.Abs(b.Mu) : Math.Abs(b.Mu) + Math.Abs(b.MuRate);
        // Where λ turns in the step (a limit point), a residual r of the trial states moves λ_cr by ~ φ·r / φ·F_ref: for a
        // local mode on a large model (small load alignment α) that is 1/α times the residual's share of the load.
        // Solve the trials that much tighter (within what rounding allows).
        _residualScale = 1.0;
        if (a.Slope != 0 && b.Slope != 0 && a.Slope != b.Slope)
            _residualScale = Math.Clamp(Alignment(b.Mode), 1e-4, 1.0);
        _blockAbsolute = 1e-12 * muScale;
        var results = new List<Result>();
        Resolve(a, b, muScale, results, ct);
        return MergeCoincident(results);
    }

    /// <summary>
    /// Two changes of the count found at the same λ (within the asked tolerance plus both estimates), neither of them a
    /// turn of λ, are one bifurcation of multiplicity |net change|: a symmetric structure's repeated eigenvalue can be
    /// split by rounding into crossings a few ulps apart, and trials a hair from it may see the count flicker. Reported
    /// once, with the k modes at the better-located state.
    /// </summary>
    private List<Result> MergeCoincident(List<Result> results)
    {
        if (results.Count < 2) return results;
        var merged = new List<Result> { results[0] };
        for (int i = 1; i < results.Count; i++)
        {
            var p = merged[^1];
            var r = results[i];
            double scale = Math.Max(1.0, Math.Abs(r.LoadFactor));
            bool coincident = Math.Abs(p.LoadFactor - r.LoadFactor) <= (controls.CriticalPointTolerance + p.Tolerance + r.Tolerance) * scale;
            if (!(coincident && p.NegativeAfter == r.NegativeBefore && p.LoadTurns != true && r.LoadTurns != true && !p.Folded && !r.Folded))
            {
                merged.Add(r);
                continue;
            }
            var keep = Math.Abs(p.Eigenvalue) <= Math.Abs(r.Eigenvalue) ? p : r;
            int k = Math.Abs(r.NegativeAfter - p.NegativeBefore);
            // Changes of opposite sign at one λ are the inertia of rounding at a repeated root (a trial a hair from it):
            // they cancel; a net change of zero leaves no critical point.
            if (k == 0) { merged.RemoveAt(merged.Count - 1); if (merged.Count == 0 && i + 1 < results.Count) merged.Add(results[++i]); continue; }
            double[][] modes = [.. p.ModesFree.Concat(r.ModesFree).Take(k)];
            double mu = keep.Eigenvalue;
            bool inPlace = _factored is not null && sys.Factor.Status != LdlStatus.ZeroPivot && (ReferenceEquals(_factored.U, keep.Displacement) || ReferenceEquals(_factored.U, keep.FactoredNear));
            if (inPlace || sys.Refactor(keep.Displacement) != LdlStatus.ZeroPivot)
            {
                var (values, vectors) = NearNullMode.ComputeBlock(sys, k, keep.ModesFree[0], absoluteTolerance: _blockAbsolute);
                modes = vectors;
                mu = values[0];
            }
            _factored = null;
            bool located = p.Located && r.Located;
            merged[^1] = new Result(keep.LoadFactor, keep.Displacement, mu, modes, p.NegativeBefore, r.NegativeAfter, located,
                Math.Max(p.Tolerance, r.Tolerance), located ? "" : string.Join("; ", new[] { p.Note, r.Note }.Where(x => x.Length > 0)), false);
        }
        return merged;
    }

    /// <summary>Locates the critical points between two states of the step (counts differ), splitting on intermediate counts.</summary>
    private void Resolve(State lo, State hi, double muScale, List<Result> results, CancellationToken ct)
    {
        if (lo.Count == hi.Count) return;
        var history = new List<State> { lo, hi };
        double fLo = lo.Mu, fHi = hi.Mu;
        int side = 0, sinceHalved = 0;
        double width = hi.T - lo.T, lastNewtonStep = double.PositiveInfinity;
        State best = !double.IsFinite(lo.Mu) || Math.Abs(hi.Mu) <= Math.Abs(lo.Mu) ? hi : lo;
        string note = "";
        bool located = false, exact = false, folded = false, noTrialState = false;
        double estimate = double.PositiveInfinity;
        double tol = controls.CriticalPointTolerance;
        // An end that is already at the root (a trial that split a bracket lands there when two crossings lie on either
        // side of it, or a pair split by rounding): its own Newton step, doubled, meets the tolerance, so no trial is
        // made. A trial a hair from a repeated root would only see the inertia of rounding.
        foreach (var end in new[] { lo, hi })
        {
            if (end.T == 0 || end.T == 1 || !double.IsFinite(end.MuRate) || end.MuRate == 0 || !double.IsFinite(end.LambdaRate)) continue;
            double dt = -end.Mu / end.MuRate;
            double own = 2 * Math.Abs(end.LambdaRate * dt);
            if (Math.Abs(dt) <= 1e-6 && own <= Target * tol * Math.Max(1.0, Math.Abs(end.Lambda)) && own < estimate) { best = end; estimate = own; located = true; }
        }

        // A count change of k > 1 claimed at one root needs evidence that all k crossings lie within the tolerance of it
        // (CheckMultiplicity): otherwise a Newton sequence that approached one eigenvalue's root from one side would
        // claim every crossing of the bracket there. Evidence trials are forced at the t it asks for.
        double? forcedT = null;
        double[][]? confirmedModes = null;
        double confirmedMu = 0;
        int evidenceTrials = 0, nudges = 0;
        State? prior = null; // the state nearest the root before best, with its rates: with best, a Hermite model of μ(t)
        for (;;)
        {
            while (!located)
            {
                if (ct.IsCancellationRequested) { note = "cancelled during location"; break; }
                if (_trials >= MaxTrials) { note = $"stopped after {MaxTrials} trial states in this step"; break; }
                // Newton on μ(t) from the state nearest the root, when its point lies inside the bracket; otherwise Illinois
                // regula falsi, and bisection when the bracket has not halved in three tries or μ has one sign (or is unknown).
                double t = 0.5 * (lo.T + hi.T);
                State? from = null;
                if (NewtonPoint(best, lo, hi, prior) is { } tn)
                {
                    t = tn;
                    from = best;
                    double stepLength = Math.Abs(tn - best.T);
                    // A Newton sequence that at least halves its step converges: do not force a bisection on it.
                    if (stepLength <= 0.5 * lastNewtonStep) sinceHalved = 0;
                    lastNewtonStep = stepLength;
                }
                else if (sinceHalved < 3 && double.IsFinite(fLo) && double.IsFinite(fHi) && Math.Sign(fLo) != Math.Sign(fHi))
                {
                    double tf = lo.T + fLo / (fLo - fHi) * (hi.T - lo.T);
                    if (tf > lo.T && tf < hi.T) t = tf;
                }
                if (from is not null && sinceHalved >= 3) { t = 0.5 * (lo.T + hi.T); from = null; }
                if (forcedT is { } ft) { t = ft; from = best.PathTangent is not null ? best : null; forcedT = null; }
                var trial = Trial(t, lo, hi, from, best.Mode, muScale, ct);
                if (trial is null)
                {
                    t = 0.5 * (lo.T + hi.T);
                    trial = Trial(t, lo, hi, null, best.Mode, muScale, ct);
                }
                else if (from is not null) NewtonTrials++;
                if (trial is null) { note = $"no equilibrium state found on the hyperplane at t = {t:G6} of the step"; noTrialState = true; break; }
                if (trial.Count < 0 && Math.Abs(hi.Count - lo.Count) > 1 && nudges < 3)
                {
                    // An exactly singular tangent shows that one eigenvalue is zero here, not how many cross here: a trial a
                    // hair away (a hundredth of the tolerance) has a regular inertia and the location goes on from it.
                    nudges++;
                    double slope = Math.Abs((hi.Lambda - lo.Lambda) / (hi.T - lo.T));
                    double nudge = 0.01 * tol * Math.Max(1.0, Math.Abs(trial.Lambda)) / slope;
                    if (!double.IsFinite(nudge) || nudge <= 0) nudge = 1e-12 * (hi.T - lo.T);
                    forcedT = t - nudge > lo.T ? t - nudge : t + nudge;
                    continue;
                }
                if (trial.Count < 0)
                {
                    // An exactly singular tangent: the trial is the critical state itself, to rounding.
                    best = trial;
                    located = true;
                    exact = true;
                    estimate = 0;
                    break;
                }
                if (trial.Count != lo.Count && trial.Count != hi.Count)
                {
                    // More than one change of the count in the bracket and this trial separates them: resolve each part. The
                    // trial's eigenpair is the one of either sign nearest zero; each part wants the one of its own crossing's
                    // sign, taken (by Lanczos, no factorisation) while the trial's factorisation is still in place.
                    var lower = ForBracket(trial, lo.Count, trial.Count);
                    var upper = ForBracket(trial, trial.Count, hi.Count);
                    Resolve(lo, lower, muScale, results, ct);
                    Resolve(upper, hi, muScale, results, ct);
                    return;
                }
                history.Add(trial);
                var previousBest = best;
                if (!double.IsFinite(best.Mu) || Math.Abs(trial.Mu) <= Math.Abs(best.Mu) || from is not null)
                {
                    if (best != trial && best.Origin is null && Rated(best)) prior = best;
                    best = trial;
                }
                if (trial.Count == lo.Count)
                {
                    lo = trial; fLo = trial.Mu;
                    if (side == -1 && double.IsFinite(fHi)) fHi *= 0.5; // Illinois: halve the retained end's value when the same end moves twice
                    side = -1;
                }
                else
                {
                    hi = trial; fHi = trial.Mu;
                    if (side == 1 && double.IsFinite(fLo)) fLo *= 0.5;
                    side = 1;
                }
                if (hi.T - lo.T <= 0.5 * width) { width = hi.T - lo.T; sinceHalved = 0; } else sinceHalved++;
                if (Folded(lo, hi))
                {
                    // Two states close in t but far apart: the hyperplanes cut the path more than once (it turns back in the
                    // chord's direction within the step), so t no longer orders the states along the path.
                    note = "the path turns too sharply within the step for its chord to order the states; a shorter step is needed";
                    folded = true;
                    break;
                }

                // The quadratic model's estimate, or Newton's for the trial itself when smaller: the λ change of its own Newton
                // correction δt = −μ/μ' (which is the error to first order) plus that correction's own uncertainty.
                estimate = ErrorEstimate(history, lo, hi, best);
                if (best == trial && NewtonEstimate(trial, previousBest, lo, hi) is { } newton && newton < estimate) estimate = newton;
                // Or the state reached by that correction along the path tangent, when its estimate is smaller still: it
                // saves the last factorisation of a converging Newton sequence.
                var (corrected, correctedEstimate) = Corrected(trial, previousBest, lo, hi);
                if (best == trial && corrected is not null && correctedEstimate < estimate) { best = corrected; estimate = correctedEstimate; }
                // Iterate to a third of the asked tolerance: the estimate is a model's, so keep a margin below the promise.
                if (estimate <= Target * tol * Math.Max(1.0, Math.Abs(best.Lambda))) { located = true; break; }
                if (best.Origin is not null) best = best.Origin;
                if (hi.T - lo.T <= 4 * double.Epsilon * Math.Max(1.0, Math.Abs(hi.T)) || hi.T - lo.T < 1e-15)
                {
                    note = $"the bracket cannot be narrowed further (width {hi.T - lo.T:G3} of the step); estimated λ error {estimate:G3}";
                    break;
                }
            }
            if (!located || exact || folded || Math.Abs(hi.Count - lo.Count) <= 1) break;
            var (confirmed, blockModes, blockMu, next) = CheckMultiplicity(best, lo, hi);
            if (confirmed) { confirmedModes = blockModes; confirmedMu = blockMu; break; }
            if (next is null || ++evidenceTrials > MaxEvidenceTrials)
            {
                located = false;
                note = $"{Math.Abs(hi.Count - lo.Count)} crossings in this part of the step could not be shown to lie within the tolerance of one load factor nor separated";
                break;
            }
            forcedT = next;
            located = false;
        }
        double relative = double.IsFinite(estimate) ? estimate / Math.Max(1.0, Math.Abs(best.Lambda)) : 1.0;
        if (!located && note.Length == 0) note = "location did not converge";
        // Located is the promise: the estimated λ error meets the asked tolerance (a trial stopped for another reason may still meet it).
        if (!located && !folded && double.IsFinite(estimate) && estimate <= tol * Math.Max(1.0, Math.Abs(best.Lambda))) { located = true; note = ""; }
        if (!located) note += $" (asked {tol:G3}, estimated {relative:G3})";
        // Without a finite estimate, or when the chord could not order the states (the model's trials lie on different
        // crossings of the path), the bracket's λ span is the honest figure.
        if (!double.IsFinite(estimate) || folded)
            relative = Math.Max(double.IsFinite(estimate) ? relative : 0, Math.Abs(hi.Lambda - lo.Lambda) / Math.Max(1.0, Math.Abs(best.Lambda)));

        int k = Math.Abs(hi.Count - lo.Count);
        if (k == 1 && !exact && best.Origin is not null) best.Mode = CorrectedMode(best);
        double[][] modes = [best.Mode];
        double mu = best.Mu;
        if (confirmedModes is not null) { modes = confirmedModes; mu = confirmedMu; }
        else if (k > 1 && !exact)
        {
            // Multiplicity k: k modes of the eigenvalues nearest zero at the located state (block inverse iteration), with
            // the factorisation in place when it is that state's or the trial's it was corrected from (modes to O(δt)).
            bool inPlace = _factored is not null && (_factored == best || _factored == best.Origin) && sys.Factor.Status != LdlStatus.ZeroPivot;
            if (!inPlace && sys.Refactor(best.U) == LdlStatus.ZeroPivot) { _factored = null; }
            else
            {
                if (!inPlace) _factored = best;
                var (values, vectors) = NearNullMode.ComputeBlock(sys, k, best.Mode, absoluteTolerance: _blockAbsolute);
                modes = vectors;
                mu = values[0];
            }
        }
        // λ turns back across the bracket (a limit point) when dλ/dt changes sign between its ends.
        bool? turns = lo.Slope != 0 && hi.Slope != 0 ? lo.Slope != hi.Slope : null;
        if (!exact)
        {
            // The residual r of the located state is part of the error: at a limit point it shifts λ_cr by about
            // φ·r / φ·F_ref; elsewhere (λ monotone, φ·F_ref ≈ 0) by about ‖r‖ / ‖F_ref‖.
            var r = _work;
            double rn = sys.Residual(best.U, best.Lambda, r);
            double shift = turns == true
                ? Math.Abs(EquilibriumSystem.Dot(best.Mode, r)) / Math.Max(Math.Abs(EquilibriumSystem.Dot(best.Mode, sys.ReferenceFree)), 1e-300)
                : rn / Math.Sqrt(sys.ReferenceNormSquared);
            if (double.IsFinite(shift)) relative += shift / Math.Max(1.0, Math.Abs(best.Lambda));
            if (located && relative > tol)
            {
                located = false;
                note = $"the residual of the located state limits λ_cr to a relative {relative:G3} (asked {tol:G3}); tighten residual_tolerance";
            }
        }
        results.Add(new Result(best.Lambda, best.U, mu, modes, lo.Count, hi.Count, located, located ? Math.Max(relative, 0) : relative, located ? "" : note, turns)
            { Folded = folded, NoTrialState = noTrialState && !located, FactoredNear = best.Origin?.U });
    }

    /// <summary>Multiplicities up to this are confirmed from the k eigenpairs nearest zero (block inverse iteration, which
    /// the modes need anyway); larger ones, or a failed check, by the inertia of trials on both sides of the root.</summary>
    private const int BlockCheckLimit = 4;

    /// <summary>Iterations of the block eigenpairs that <see cref="CheckMultiplicity"/> spends before leaving the decision to the inertia.</summary>
    private const int CheckIterations = 8;

    /// <summary>Forced evidence trials per bracket before a multiple point is reported as not located.</summary>
    private const int MaxEvidenceTrials = 6;

    /// <summary>
    /// Whether the k = |Δcount| crossings of the bracket [lo, hi] lie within the asked tolerance of the located root
    /// (best): by inertia, when both ends' λ lie within it (Sylvester's law of inertia: the count of negative pivots is
    /// the count of negative eigenvalues); or, for k ≤ <see cref="BlockCheckLimit"/>, from the k eigenpairs nearest zero
    /// at the factorised trial F, each of whose Newton roots t_F − μ_j/μ'_j must fall within the tolerance of best (the
    /// same first-order estimate the location itself rests on). Otherwise the t of an evidence trial just past the root
    /// (a tenth of the tolerance) toward the end farther from it in λ: its count either closes the bracket there or
    /// splits it, so that distinct crossings close together are separated rather than reported as one.
    /// </summary>
    private (bool Confirmed, double[][]? Modes, double Mu, double? Next) CheckMultiplicity(State best, State lo, State hi)
    {
        int k = Math.Abs(hi.Count - lo.Count);
        double tolAbs = controls.CriticalPointTolerance * Math.Max(1.0, Math.Abs(best.Lambda));
        if (Math.Abs(lo.Lambda - best.Lambda) <= tolAbs && Math.Abs(hi.Lambda - best.Lambda) <= tolAbs) return (true, null, 0, null);
        var f = _factored;
        if (k <= BlockCheckLimit && f is not null && (f == best || f == best.Origin) && f.PathTangent is not null
            && double.IsFinite(f.LambdaRate) && sys.Factor.Status != LdlStatus.ZeroPivot)
        {
            // Bounded in iterations: next to a cluster of crossings the subspace converges slowly (the next eigenvalues are
            // almost as small), and one evidence trial's factorisation costs less than many block iterations; the inertia
            // then decides.
            var (values, vectors, converged) = NearNullMode.ComputeBlock(sys, k, best.Mode, null, CheckIterations, 1e-10, _blockAbsolute);
            if (converged)
            {
                var rates = ModeRates(f, vectors);
                bool all = true;
                for (int j = 0; j < k && all; j++)
                {
                    double lambda = f.Lambda - f.LambdaRate * values[j] / rates[j];
                    all = double.IsFinite(lambda) && Math.Abs(lambda - best.Lambda) <= tolAbs;
                }
                if (all) return (true, vectors, values[0], null);
            }
        }
        var far = Math.Abs(lo.Lambda - best.Lambda) >= Math.Abs(hi.Lambda - best.Lambda) ? lo : hi;
        double rate = double.IsFinite(best.LambdaRate) && best.LambdaRate != 0 ? best.LambdaRate : (hi.Lambda - lo.Lambda) / (hi.T - lo.T);
        double step = 0.1 * tolAbs / Math.Abs(rate);
        double t = best.T + Math.Sign(far.T - best.T) * step;
        if (!double.IsFinite(t) || !(t > lo.T && t < hi.T)) t = 0.5 * (best.T + far.T);
        return (false, null, 0, t > lo.T && t < hi.T && t != best.T ? t : null);
    }

    /// <summary>μ'_j = φ_jᵀ(dK/dt)φ_j of several unit modes at a factorised state, from one pair of tangents at u ± h u'.</summary>
    private double[] ModeRates(State f, double[][] modes)
    {
        var rates = new double[modes.Length];
        foreach (double h in new[] { RateStep, -RateStep })
        {
            Array.Copy(f.U, _uh, _uh.Length);
            sys.AddFree(_uh, f.PathTangent!, h);
            sys.Assembler.Tangent(_uh, _kv);
            for (int j = 0; j < modes.Length; j++)
            {
                sys.Assembler.Multiply(_kv, modes[j], _kphi);
                rates[j] += Math.Sign(h) * EquilibriumSystem.Dot(modes[j], _kphi) / (2 * RateStep);
            }
        }
        return rates;
    }

    /// <summary>The trial as an end of the bracket with counts (countLo, countHi): its eigenpair re-picked with the sign
    /// of that bracket's crossing when it has the other sign (the trial's factorisation must be in place).</summary>
    private State ForBracket(State trial, int countLo, int countHi)
    {
        int sign = CrossingSign(trial.Count, countLo, countHi);
        if (sign == 0 || Math.Sign(trial.Mu) == sign || _factored != trial) return trial;
        var (mu, mode, found) = NearNullMode.NearestOfSign(sys, sign, trial.Mode, _basis);
        if (!found) return trial;
        var s = new State(trial.T, trial.U, trial.Lambda, trial.Count, mu, mode, trial.Slope)
        {
            LambdaRate = trial.LambdaRate, PathTangent = trial.PathTangent,
        };
        if (trial.PathTangent is not null)
        {
            double muRate = (ModeStiffness(s.U, trial.PathTangent, RateStep, mode) - ModeStiffness(s.U, trial.PathTangent, -RateStep, mode)) / (2 * RateStep);
            if (double.IsFinite(muRate)) s.MuRate = muRate;
        }
        _factored = s; // the same factorisation; the modified Newton of the next trial uses it
        return s;
    }

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
        // μ is needed to 10⁻⁶ of itself (it steers the root finding) and, near the root, to 10⁻¹² of its values at the
        // step ends: more would only cost inverse-iteration solves.
        (s.Mu, s.Mode) = Crossing(modeGuess, CrossingSign(s.Count, lo.Count, hi.Count), TrialTolerance, 1e-12 * muScale, TrialToleranceFor(from));
        Rates(s, null);
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
        var (mu, mode) = Crossing(guess, sign, tolerance, 0);
        var s = new State(t, u, lambda, count, mu, mode, 0);
        Rates(s, predictor);
        _factored = s;
        return s;
    }

    private static int SignOf(double x) => double.IsFinite(x) ? Math.Sign(x) : 0;

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
    /// which lie on the hyperplanes at t_lo and t_hi, so either prediction lies on the one at t.
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
