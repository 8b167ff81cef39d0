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
internal sealed partial class CriticalPointLocator(EquilibriumSystem sys, Corrector corrector, SolverControls controls)
{
    /// <summary>One resolved critical point of the step.</summary>
    /// <param name="LoadTurns">True when λ turns back across the bracket (dλ/dt changes sign: a limit point), false when it passes on, null when unknown.</param>
    public sealed record Result(double LoadFactor, double[] Displacement, double Eigenvalue, double[][] ModesFree,
        int NegativeBefore, int NegativeAfter, bool Located, double Tolerance, string Note, bool? LoadTurns)
    {
        /// <summary>Why a shorter step is needed to locate this point (null: it is not): <see cref="CutReason.SharpTurn"/>
        /// when the chord of the step could not order the states (the path turns back within it),
        /// <see cref="CutReason.LocationFailed"/> when no equilibrium state was found on one of the step's hyperplanes.</summary>
        public CutReason? RetryShorter { get; init; }
        public bool Folded => RetryShorter == CutReason.SharpTurn;
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
        // Newton from b is trusted only when its root lies inside the step. Where it does not, the eigenvalue of the
        // crossing's sign nearest zero at b is a soft mode that does not cross here (it stiffens slowly while the crossing
        // one moves fast: on the bench roof's unloading side μ_b ≈ 30–50 at μ'_b ≈ 4, against a crossing rate near 200).
        // At a the crossing eigenvalue has the other sign and is the nearest of it, so a is described (one factorisation)
        // rather than spending a bisection trial and the regula falsi trials after it (m = 60 roof: 51 → 36 trials).
        double rootFromB = 1 - b.Mu / b.MuRate;
        bool newtonFromB = double.IsFinite(rootFromB) && rootFromB > 0 && rootFromB < 1;
        if (predictorA is not null && double.IsFinite(b.MuRate) && b.MuRate != 0 && newtonFromB)
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
            // Only points located to within a thousand times the tolerance merge: an unlocated one's estimated error can
            // span other crossings (it would swallow them into one point of a false multiplicity).
            double near = 1e3 * controls.CriticalPointTolerance;
            if (!(coincident && p.Tolerance <= near && r.Tolerance <= near && p.NegativeAfter == r.NegativeBefore && p.LoadTurns != true && r.LoadTurns != true && !p.Folded && !r.Folded))
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
                Math.Max(p.Tolerance, r.Tolerance), located ? "" : string.Join("; ", new[] { p.Note, r.Note }.Where(x => x.Length > 0)), false)
                { RetryShorter = p.RetryShorter ?? r.RetryShorter };
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
        // Start from the end nearer the root by its own Newton step |μ/μ'| among those whose step stays inside the bracket
        // (the smaller |μ| can belong to a soft mode that barely moves); otherwise from the smaller |μ|.
        State best = !double.IsFinite(lo.Mu) || Math.Abs(hi.Mu) <= Math.Abs(lo.Mu) ? hi : lo;
        bool loInside = NewtonPoint(lo, lo, hi) is not null, hiInside = NewtonPoint(hi, lo, hi) is not null;
        if (loInside && hiInside) best = Math.Abs(lo.Mu / lo.MuRate) < Math.Abs(hi.Mu / hi.MuRate) ? lo : hi;
        else if (loInside) best = lo;
        else if (hiInside) best = hi;
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
            {
                RetryShorter = folded ? CutReason.SharpTurn : noTrialState && !located ? CutReason.LocationFailed : null,
                FactoredNear = best.Origin?.U,
            });
    }
}
