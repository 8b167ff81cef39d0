using PathService.Engine.Sparse;
using PathService.Engine.Stability;

namespace PathService.Engine.Continuation;

/// <summary>
/// Steps along one branch of the path: predictor, corrector, cuts, the converged point, critical-point location and,
/// on the primary path, the switch to secondary branches at bifurcations. Ends by setting <see cref="EndReason"/>.
/// </summary>
internal sealed class BranchWalker(TraceSession s)
{
    /// <summary>A step whose count of negative pivots changes by more than this is cut before its critical points are
    /// located (at most <see cref="CrowdedStepCuts"/> times): the bench roofs cross up to hundreds of eigenvalues in one
    /// step, which one chord resolves poorly.</summary>
    internal const int MaxCrossingsPerStep = 8;

    /// <summary>Cuts of one step for crowded crossings; after them the step's critical points are located as they are.</summary>
    private const int CrowdedStepCuts = 4;

    private readonly double[] _dU = new double[s.Sys.FreeCount];
    private readonly double[] _newPredictor = new double[s.Sys.FreeCount];
    private readonly double[] _previous = new double[s.Model.Dofs.FullCount];
    private readonly double[] _midpoint = new double[s.Model.Dofs.FullCount];
    private double[]? _modeGuess;
    private double _minIncrement, _maxIncrement;
    private readonly MemberMonitor _members = new(s.Model, s.Sys);

    public (StopReason Reason, string Message)? EndReason { get; private set; }

    public void SetIncrementBounds(double first)
    {
        _minIncrement = s.Controls.MinIncrementRatio * Math.Abs(first);
        _maxIncrement = s.Controls.MaxIncrementRatio * Math.Abs(first);
    }

    /// <summary>
    /// The factorisation count at which the tangent in place was factorised at the branch's converged point (−1: the
    /// factorisation in place belongs to some other state). Every factorisation is tagged this way, so that branch state
    /// (inertia, predictor) is only ever taken from the tangent of a converged point, never from a trial state.
    /// </summary>
    private int _factorOfBranch = -1;
    private readonly TurnDetector _turns = new(s);

    /// <summary>
    /// Factorises the tangent at the branch's converged point: its inertia and the predictor K⁻¹F_ref. False, with the
    /// branch state untouched, when the tangent there is exactly singular (the point is a critical point to rounding).
    /// </summary>
    public bool RefreshTangent(BranchState b)
    {
        if (s.Sys.Refactor(b.U) == LdlStatus.ZeroPivot) { _factorOfBranch = -1; return false; }
        b.Inertia = s.Sys.Factor.NegativePivotCount;
        s.Sys.Factor.Solve(s.Sys.ReferenceFree, b.Predictor);
        _factorOfBranch = s.Sys.Factorizations;
        return true;
    }

    /// <summary>Makes the factorisation in place the tangent at the converged point <paramref name="converged"/> of the branch, without changing branch state.</summary>
    private void EnsureBranchFactor(double[] converged)
    {
        if (_factorOfBranch == s.Sys.Factorizations && s.Sys.Factor.Status != LdlStatus.ZeroPivot) return;
        _factorOfBranch = s.Sys.Refactor(converged) == LdlStatus.ZeroPivot ? -1 : s.Sys.Factorizations;
    }

    public IEnumerable<PathEvent> Walk(BranchState b, int pointBudget)
    {
        var c = s.Controls;
        var sys = s.Sys;
        int n = sys.FreeCount;
        _members.Start(b.U, b.Lambda);
        _turns.Start(b);
        while (true)
        {
            if (s.GlobalStop() is { } stop) { EndReason = stop; yield break; }
            if (b.PointsOnBranch >= pointBudget) { EndReason = (StopReason.BranchPointsReached, $"branch {b.Id} reached its {pointBudget} points"); yield break; }
            double increment = b.Increment;
            if (c.Method == ContinuationMethod.LoadControl && c.TargetLoadFactor is { } tl && tl > b.Lambda)
                increment = Math.Min(increment, tl - b.Lambda);
            if (c.Method == ContinuationMethod.DisplacementControl && c.TargetDisplacement is { } tdv && s.TargetDof >= 0)
            {
                double remaining = tdv - b.U[s.TargetDof];
                if (Math.Sign(remaining) == Math.Sign(increment) && Math.Abs(increment) > Math.Abs(remaining)) increment = remaining;
            }
            s.Steps++;
            Array.Copy(b.U, _previous, _previous.Length);
            double previousLambda = b.Lambda;
            int attempt = 0;
            double lambda = b.Lambda, dLam = 0;
            CorrectorOutcome outcome;
            List<CriticalPoint>? found;
            int pointIterations = 0, newInertia = b.Inertia;
            double residual = 0;
            while (true)
            {
                // Predictor along the tangent of the last converged point: Δu = Δλ · K⁻¹F_ref.
                double dl = PredictLoadIncrement(b, increment);
                Array.Copy(_previous, b.U, b.U.Length);
                for (int e = 0; e < n; e++) _dU[e] = dl * b.Predictor[e];
                sys.AddFree(b.U, _dU);
                lambda = previousLambda + dl;
                dLam = dl;
                var constraint = c.Method switch
                {
                    ContinuationMethod.LoadControl => new StepConstraint(ConstraintKind.Load),
                    ContinuationMethod.DisplacementControl => new StepConstraint(ConstraintKind.Displacement, ControlEquation: s.ControlEquation),
                    _ => new StepConstraint(ConstraintKind.ArcLength, ArcLength: increment, PsiSquared: s.PsiSquared),
                };
                if (c.ModifiedNewton)
                {
                    // Modified Newton iterates with a fixed tangent: the converged point's on the first attempt; after a cut,
                    // the tangent at the predicted state (closer to the solution). That factorisation is a trial state's:
                    // it is used for the iterations only and never becomes the branch's inertia or predictor.
                    if (attempt == 0) EnsureBranchFactor(_previous);
                    else { sys.Refactor(b.U); _factorOfBranch = -1; }
                }
                outcome = s.Corrector.Correct(b.U, ref lambda, _dU, ref dLam, constraint, c.MaxIterations, c.ResidualTolerance, s.Ct, keepFactor: c.ModifiedNewton);
                s.Iterations += s.Corrector.Iterations;
                if (!c.ModifiedNewton || outcome != CorrectorOutcome.Cut) _factorOfBranch = -1;
                var reason = s.Corrector.Reason;
                string detail = s.Corrector.Detail;
                if (outcome == CorrectorOutcome.Converged && c.Method == ContinuationMethod.LoadControl && JumpedOverUnstablePart(b.Inertia, b.U))
                {
                    // Newton under load control can land on a remote branch after a snap-through, silently skipping
                    // the unstable part of the path and its critical points; reject such a step.
                    outcome = CorrectorOutcome.Cut;
                    reason = CutReason.PathJump;
                    detail = "the tangent half-way through the step has a different number of negative pivots: the step jumped over an unstable part of the path (snap-through)";
                }
                if (outcome == CorrectorOutcome.Converged && sys.Refactor(b.U) == LdlStatus.ZeroPivot)
                {
                    // The converged point is a critical point to rounding: its tangent has an exactly zero pivot, so it gives
                    // neither an inertia nor a predictor. Shorten the step; the critical point is then bracketed and located.
                    outcome = CorrectorOutcome.Cut;
                    reason = CutReason.SingularTangent;
                    detail = "the converged point lies on a critical point to rounding (exactly singular tangent); the step is shortened so that the critical point is bracketed and located";
                }
                found = null;
                if (outcome == CorrectorOutcome.Converged)
                {
                    // One factorisation at the new point serves its inertia and the next predictor (kept aside until the
                    // step is accepted), then the location of any critical point the step passed.
                    pointIterations = s.Corrector.Iterations;
                    residual = s.Corrector.ResidualNorm;
                    newInertia = sys.Factor.NegativePivotCount;
                    sys.Factor.Solve(sys.ReferenceFree, _newPredictor);
                    bool canHalve = attempt < CrowdedStepCuts && Math.Abs(0.5 * increment) >= _minIncrement;
                    bool locate = c.DetectCriticalPoints && LocationAllowed;
                    if (locate && Math.Abs(newInertia - b.Inertia) > MaxCrossingsPerStep && canHalve)
                    {
                        // Many eigenvalues crossing within one step: locating them on one chord means long Newton sequences
                        // between close roots, evidence trials and, near a dense cluster, hyperplane states that are hard to
                        // converge (a failure there discards the step's work). A shorter step brackets them in smaller groups.
                        outcome = CorrectorOutcome.Cut;
                        reason = CutReason.CrowdedCrossings;
                        detail = $"{Math.Abs(newInertia - b.Inertia)} eigenvalues of the tangent crossed zero within the step (more than {MaxCrossingsPerStep}); the step is shortened so that its critical points are bracketed in smaller groups";
                    }
                    else if (newInertia != b.Inertia && c.DetectCriticalPoints && !locate)
                        found = [Unresolved(_previous, previousLambda, b.Inertia, b.U, lambda, newInertia, b.LastPointIndex, s.Points)];
                    else if (newInertia != b.Inertia && c.DetectCriticalPoints)
                    {
                        // Critical-point work is timed apart (with its factorisations and their time) for the summary.
                        long started = System.Diagnostics.Stopwatch.GetTimestamp();
                        int factorizations = sys.Factorizations;
                        long solves = sys.Solves;
                        var factorTime = sys.FactorizationTime;
                        found = LocateCritical(_previous, previousLambda, b.Inertia, b.U, lambda, newInertia, b.LastPointIndex, s.Points, b.Predictor);
                        s.CriticalPointTime += System.Diagnostics.Stopwatch.GetElapsedTime(started);
                        s.CriticalPointFactorizations += sys.Factorizations - factorizations;
                        s.CriticalPointSolves += sys.Solves - solves;
                        s.CriticalPointFactorizationTime += sys.FactorizationTime - factorTime;
                        bool canShorten = attempt < c.MaxCutsPerStep && Math.Abs(0.5 * increment) >= _minIncrement;
                        // A sharp turn first: it explains a failed trial state as well.
                        var retry = found.Any(f => f.RetryShorter == CutReason.SharpTurn) ? CutReason.SharpTurn : found.FirstOrDefault(f => f.RetryShorter is not null)?.RetryShorter;
                        if (canShorten && retry is { } why)
                        {
                            outcome = CorrectorOutcome.Cut;
                            reason = why;
                            detail = why == CutReason.SharpTurn
                                ? "the path turns back within the step too sharply for its critical point to be located on the step's chord; the step is shortened"
                                : "a critical point in the step could not be located (no equilibrium state on one of the hyperplanes across the step); the step is shortened";
                        }
                    }
                }
                if (outcome != CorrectorOutcome.Cut) break;
                s.Cuts++;
                attempt++;
                double rejected = increment;
                increment *= 0.5;
                bool giveUp = attempt > c.MaxCutsPerStep || Math.Abs(increment) < _minIncrement;
                yield return new StepCut(s.Steps, attempt, reason, rejected, giveUp ? 0 : increment, s.Corrector.Iterations, s.Corrector.ResidualNorm, detail);
                if (giveUp)
                {
                    Array.Copy(_previous, b.U, b.U.Length);
                    string hint = c.Method == ContinuationMethod.LoadControl
                        ? " Load control cannot pass a limit point; use arc-length continuation to follow the path beyond it."
                        : "";
                    EndReason = (StopReason.Diverged, $"step {s.Steps} did not converge after {attempt} cuts ({reason}: {detail}).{hint}");
                    yield break;
                }
            }
            if (outcome == CorrectorOutcome.Cancelled)
            {
                Array.Copy(_previous, b.U, b.U.Length);
                EndReason = (StopReason.Cancelled, "cancelled by the caller");
                yield break;
            }

            b.Lambda = lambda;
            b.LastLoadStep = dLam;
            Array.Copy(_dU, b.LastStep, n);
            b.HasPreviousStep = true;
            int inertiaBefore = b.Inertia;
            b.Inertia = newInertia;
            Array.Copy(_newPredictor, b.Predictor, n);
            b.ArcLength += Math.Sqrt(EquilibriumSystem.Dot(_dU, _dU) + s.PsiSquared * dLam * dLam * sys.ReferenceNormSquared);
            b.Increment = increment;
            s.MaxLoadFactor = Math.Max(s.MaxLoadFactor, lambda);
            s.FinalLoadFactor = lambda;
            bool crossed = found is { Count: > 0 };
            bool atEnd = s.StopRuleMet(b.U, lambda) || s.Points + 1 >= c.MaxPoints;
            bool full = (c.FullStateEvery > 0 && s.Points % c.FullStateEvery == 0) || (atEnd && c.FullStateAtEnd);
            yield return MakePoint(b, pointIterations, residual, increment, full);
            if (_turns.Check(b, _dU) is { } turns) foreach (var t in turns) yield return t;

            if (crossed)
            {
                foreach (var f in found!)
                {
                    var cp = f with { Sequence = s.Criticals.Count + 1, Branch = b.Id };
                    s.Criticals.Add(cp);
                    yield return cp;
                }
                if (c.StopAtFirstCriticalPoint)
                {
                    var first = found[0];
                    EndReason = (StopReason.CriticalPointReached, $"stopped at the first critical point ({first.Kind} at λ = {first.LoadFactor:G8})");
                    yield break;
                }
                if (c.SwitchBranches && b.Id == 0)
                    foreach (var cp in s.Criticals.Skip(s.Criticals.Count - found.Count).Where(x => x.Kind == CriticalPointKind.Bifurcation && x.Located).ToList())
                    {
                        sys.Assembler.CommitMaterialState(b.U);
                        var history = (double[])sys.Assembler.PlasticStrain.Clone();
                        foreach (var e in FollowSecondary(b, cp)) yield return e;
                        history.CopyTo(sys.Assembler.PlasticStrain, 0);
                        if (EndReason is { } end && end.Reason is StopReason.Cancelled or StopReason.WallTimeExceeded or StopReason.PointLimitReached) yield break;
                        EndReason = null;
                        _factorOfBranch = -1;
                    }
            }

            // The converged point becomes the material history (after any critical-point location, which worked from
            // the previous point's history); then member checks.
            foreach (var me in _members.Check(b.U, b.LastPointIndex, lambda, b.Id)) yield return me;
            sys.Assembler.CommitMaterialState(b.U);
            _members.RememberHistory(b.U);

            if (c.TargetLoadFactor is { } target && lambda >= target)
            { EndReason = (StopReason.TargetLoadFactorReached, $"reached the target load factor {target:G6} (λ = {lambda:G8})"); yield break; }
            if (s.TargetDisplacementMet(b.U))
            { EndReason = (StopReason.TargetDisplacementReached, $"reached the target displacement {c.TargetDisplacement:G6}"); yield break; }

            // Adaptive increment: scale by (desired / used iterations)^½, at most halving or doubling (Crisfield 1981).
            double factor = Math.Sqrt((double)c.DesiredIterations / Math.Max(1, pointIterations));
            // Modified Newton: a step that had to be cut does not let the next one grow (common practice, no source). Its
            // retry iterates with a fresh tangent at the predicted state, so it converges in few iterations, and the rule
            // above would double the increment straight back into another cut (89 instead of 33 cuts on the demo dome
            // with 3 iterations allowed).
            if (attempt > 0 && c.ModifiedNewton) factor = Math.Min(factor, 1.0);
            double next = b.Increment * Math.Clamp(factor, 0.5, 2.0);
            b.Increment = Math.CopySign(Math.Clamp(Math.Abs(next), _minIncrement, _maxIncrement), next);
        }
    }

    /// <summary>
    /// Enters the secondary branch at a located bifurcation: a step of length Δs along the critical mode φ from the
    /// critical state, corrected on the hyperplane (u − u_c)·φ = Δs (a perturbation along the near-null mode; e.g.
    /// W. Wagner and P. Wriggers, "A simple method for the calculation of postcritical branches", Eng. Comput. 5, 1988),
    /// then arc-length continuation on that branch.
    /// </summary>
    private IEnumerable<PathEvent> FollowSecondary(BranchState primary, CriticalPoint cp)
    {
        var sys = s.Sys;
        int n = sys.FreeCount;
        int id = s.Branches++;
        yield return new BranchStarted(id, primary.Id, cp.Sequence, cp.LoadFactor);
        var phi = new double[n];
        sys.Model.Dofs.Gather(cp.Mode, phi);
        double norm = Math.Sqrt(EquilibriumSystem.Dot(phi, phi));
        for (int e = 0; e < n; e++) phi[e] /= norm;
        double ds = Math.Abs(primary.Increment) * s.Controls.BranchPerturbation;
        var uc = cp.State?.Displacements ?? throw new InvalidOperationException("the critical state is needed for branch switching");

        var u = (double[])uc.Clone();
        for (int e = 0; e < n; e++) _dU[e] = ds * phi[e];
        sys.AddFree(u, _dU);
        double lambda = cp.LoadFactor, dLam = 0;
        var constraint = new StepConstraint(ConstraintKind.Hyperplane, Normal: phi, NormalLoad: 0, LoadWeight: 0);
        var outcome = s.Corrector.Correct(u, ref lambda, _dU, ref dLam, constraint, s.Controls.MaxIterations, s.Controls.ResidualTolerance, s.Ct);
        s.Iterations += s.Corrector.Iterations;
        if (outcome != CorrectorOutcome.Converged)
        {
            EndReason = (StopReason.BranchNotFound, $"no equilibrium found on the secondary branch at λ = {cp.LoadFactor:G8}: {s.Corrector.Detail}");
            yield return new BranchEnded(id, EndReason.Value.Reason, EndReason.Value.Message);
            yield break;
        }
        var branch = new BranchState(id, u, lambda, 0, ds, n) { HasPreviousStep = true, LastLoadStep = dLam };
        Array.Copy(_dU, branch.LastStep, n);
        int iterations = s.Corrector.Iterations;
        double residual = s.Corrector.ResidualNorm;
        var inner = new BranchWalker(s);
        if (!inner.RefreshTangent(branch))
        {
            EndReason = (StopReason.BranchNotFound, $"the first point of the secondary branch at λ = {lambda:G8} has an exactly singular tangent; the branch is not followed");
            yield return new BranchEnded(id, EndReason.Value.Reason, EndReason.Value.Message);
            yield break;
        }
        s.Steps++;
        s.MaxLoadFactor = Math.Max(s.MaxLoadFactor, lambda);
        s.FinalLoadFactor = lambda;
        branch.ArcLength = ds;
        var c = s.Controls;
        bool full = (c.FullStateEvery > 0 && s.Points % c.FullStateEvery == 0) || (s.Points + 1 >= c.MaxPoints && c.FullStateAtEnd);
        yield return inner.MakePoint(branch, iterations, residual, ds, full);
        inner._minIncrement = _minIncrement;
        inner._maxIncrement = _maxIncrement;
        foreach (var e in inner.Walk(branch, s.Controls.SecondaryBranchPoints)) yield return e;
        EndReason = inner.EndReason;
        var end = EndReason ?? (StopReason.BranchPointsReached, "branch ended");
        yield return new BranchEnded(id, end.Reason, end.Message);
    }

    public PathPoint MakePoint(BranchState b, int iterations, double residual, double increment, bool full)
    {
        int index = s.Points++;
        b.LastPointIndex = index;
        b.PointsOnBranch++;
        return new PathPoint(index, b.Lambda, b.ArcLength, s.Monitored.Select(d => b.U[d]).ToArray(), iterations, residual, b.Inertia,
            b.Inertia == 0 ? Stability.Stable : Stability.Unstable, Math.Abs(increment), full ? s.Sys.Snapshot(b.U, b.Lambda) : null) { Branch = b.Id };
    }

    /// <summary>Load-factor part of the predictor for the chosen method.</summary>
    private double PredictLoadIncrement(BranchState b, double increment)
    {
        var sys = s.Sys;
        switch (s.Controls.Method)
        {
            case ContinuationMethod.LoadControl: return increment;
            case ContinuationMethod.DisplacementControl: return increment / b.Predictor[s.ControlEquation];
            default:
                double dl = increment / Math.Sqrt(EquilibriumSystem.Dot(b.Predictor, b.Predictor) + s.PsiSquared * sys.ReferenceNormSquared);
                // Keep going the same way along the path: the sign that makes the predictor point along the previous
                // increment (positive "work" of the step; Feng, Perić and Owen 1996), which passes limit points and snap-backs.
                if (b.HasPreviousStep && EquilibriumSystem.Dot(b.LastStep, b.Predictor) + s.PsiSquared * b.LastLoadStep * sys.ReferenceNormSquared < 0) dl = -dl;
                return dl;
        }
    }

    /// <summary>
    /// Load control only: counts the negative pivots of the tangent at the end and at the mid-state of a converged step.
    /// A mid-state count that matches neither end means the step passed over unstable states between two stable
    /// stretches, i.e. it snapped to a remote branch (passing a bifurcation changes the count once and is not flagged).
    /// </summary>
    private bool JumpedOverUnstablePart(int startInertia, double[] end)
    {
        var sys = s.Sys;
        if (sys.Refactor(end) == LdlStatus.ZeroPivot) return false;
        int endInertia = sys.Factor.NegativePivotCount;
        for (int i = 0; i < _midpoint.Length; i++) _midpoint[i] = 0.5 * (_previous[i] + end[i]);
        if (sys.Refactor(_midpoint) == LdlStatus.ZeroPivot) return false;
        int mid = sys.Factor.NegativePivotCount;
        return mid != startInertia && mid != endInertia;
    }

    /// <summary>
    /// Resolves the step from (u_a, λ_a) to the branch's new point into its critical points, in path order. The kind
    /// follows from what defines it: a limit point where λ turns back along the path (dλ/dt changes sign across the
    /// bracket), a bifurcation where it passes on (and always for a change of the count by more than one at one λ).
    /// Only when the turn cannot be judged (a chord without displacement) does the load alignment decide, against
    /// <see cref="SolverControls.FallbackAlignmentThreshold"/>.
    /// </summary>
    /// <param name="predictorA">K⁻¹F_ref at u_a (the branch's predictor at its last point): the start of the step then
    /// needs no factorisation.</param>
    private List<CriticalPoint> LocateCritical(double[] ua, double la, int na, double[] ub, double lb, int nb, int before, int after, double[] predictorA)
    {
        var c = s.Controls;
        var sys = s.Sys;
        var locator = new CriticalPointLocator(sys, s.Corrector, c);
        // The factorisation in place is the tangent at b (factorised at the converged point), and K⁻¹F_ref there is the
        // new predictor.
        var found = locator.Locate(ua, la, na, ub, lb, nb, _modeGuess, s.Ct, factorAtB: true, predictorA: predictorA, predictorB: _newPredictor);
        s.CriticalPointTrials += locator.Trials;
        s.CriticalPointNewtonTrials += locator.NewtonTrials;
        _factorOfBranch = -1;
        var list = new List<CriticalPoint>(found.Count);
        var factored = locator.FactoredDisplacement;
        foreach (var r in found)
        {
            var primary = r.ModesFree[0];
            _modeGuess = primary;
            double alignment = Math.Abs(EquilibriumSystem.Dot(primary, sys.ReferenceFree)) /
                               Math.Max(1e-300, Math.Sqrt(EquilibriumSystem.Dot(primary, primary) * sys.ReferenceNormSquared));
            int multiplicity = Math.Max(1, Math.Abs(r.NegativeAfter - r.NegativeBefore));
            var kind = multiplicity > 1 ? CriticalPointKind.Bifurcation
                : r.LoadTurns is { } turns ? (turns ? CriticalPointKind.LimitPoint : CriticalPointKind.Bifurcation)
                : alignment >= c.FallbackAlignmentThreshold ? CriticalPointKind.LimitPoint : CriticalPointKind.Bifurcation;
            bool keepState = c.FullStateAtCriticalPoints || c.SwitchBranches;
            CriticalLoadSensitivity? sensitivity = null;
            double? directional = null;
            if (c.DesignSensitivities && r.Located && r.RetryShorter != CutReason.SharpTurn)
            {
                // A limit point needs no factorisation; a bifurcation one solve with the tangent at the located state,
                // refactorised only when the locator's last factorisation belongs to another state (theory §13).
                bool factorAtU = ReferenceEquals(factored, r.Displacement);
                if (kind == CriticalPointKind.Bifurcation && !factorAtU) factored = null;
                sensitivity = SensitivityAnalysis.Compute(sys, r.Displacement, r.LoadFactor, r.ModesFree, kind, factorAtU);
                if (kind == CriticalPointKind.Bifurcation && !factorAtU) factored = r.Displacement;
                if (sensitivity.Defined && c.DesignDirection is { } changes) directional = sensitivity.Directional(changes.Resolve(s.Model, (_, _, _) => { }));
            }
            list.Add(new CriticalPoint(0, kind, r.LoadFactor, la, lb, before, after, r.NegativeBefore, r.NegativeAfter, r.Eigenvalue, alignment,
                s.Monitored.Select(d => r.Displacement[d]).ToArray(), FullMode(primary), r.Located, r.Tolerance,
                keepState ? sys.Snapshot(r.Displacement, r.LoadFactor) : null)
            {
                Multiplicity = multiplicity,
                AdditionalModes = r.ModesFree.Skip(1).Select(FullMode).ToArray(),
                LocationNote = r.Note,
                RetryShorter = r.RetryShorter,
                Sensitivity = sensitivity,
                DirectionalSensitivity = directional,
            });
        }
        return list;
    }

    /// <summary>Whether critical points are still to be located: fewer than <see cref="SolverControls.MaxLocatedCriticalPoints"/>
    /// have gone through location so far (on every branch of the trace).</summary>
    private bool LocationAllowed =>
        s.Controls.MaxLocatedCriticalPoints is not { } max || s.Criticals.Count(x => x.Kind != CriticalPointKind.Unresolved) < max;

    /// <summary>
    /// A step across which the count changed, reported without location once the limit of located critical points is
    /// reached: its λ and monitored displacements are those of the middle of the step's chord, its estimated error half
    /// the step's λ span (no bound where λ turns within the step), and it has no mode, eigenvalue or state.
    /// </summary>
    private CriticalPoint Unresolved(double[] ua, double la, int na, double[] ub, double lb, int nb, int before, int after)
    {
        double lambda = 0.5 * (la + lb);
        int k = Math.Abs(nb - na);
        string note = $"not located: max_located_critical_points ({s.Controls.MaxLocatedCriticalPoints}) was reached; the count of negative pivots changed by {nb - na} within this step";
        return new CriticalPoint(0, CriticalPointKind.Unresolved, lambda, la, lb, before, after, na, nb, 0.0, 0.0,
            s.Monitored.Select(d => 0.5 * (ua[d] + ub[d])).ToArray(), [], false, 0.5 * Math.Abs(lb - la) / Math.Max(1.0, Math.Abs(lambda)), null)
        {
            Multiplicity = k,
            LocationNote = note,
        };
    }

    /// <summary>A free-DOF mode as a full vector (layout of the DofMap), largest component 1.</summary>
    private double[] FullMode(double[] free)
    {
        var modeFull = new double[s.Model.Dofs.FullCount];
        s.Sys.Model.Dofs.Scatter(free, modeFull);
        double peak = modeFull.MaxBy(Math.Abs);
        if (peak != 0) for (int i = 0; i < modeFull.Length; i++) modeFull[i] /= peak;
        return modeFull;
    }
}
