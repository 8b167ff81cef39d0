using System.Diagnostics;
using PathService.Engine.Model;
using PathService.Engine.Sparse;
using PathService.Engine.Stability;

namespace PathService.Engine.Continuation;

/// <summary>
/// Follows the equilibrium path of a <see cref="StructuralModel"/> under F(λ) = F_const + λF_ref and yields each
/// converged point as soon as it converges, with cut steps and critical points in between, and a
/// <see cref="PathSummary"/> last. The enumeration is lazy: work happens while the caller pulls, and stops within
/// one iteration after the <see cref="CancellationToken"/> is cancelled (the summary then says Cancelled).
/// </summary>
/// <remarks>
/// Throws <see cref="ModelValidationException"/> for invalid controls and <see cref="MechanismException"/> when the
/// starting tangent is singular, both before the first point.
/// </remarks>
public sealed class PathTracer
{
    private readonly StructuralModel _model;
    private readonly SolverControls _c;
    private readonly OrderingMethod _ordering;


    public PathTracer(StructuralModel model, SolverControls controls, OrderingMethod ordering = OrderingMethod.ApproximateMinimumDegree)
    {
        _model = model;
        _c = controls;
        _ordering = ordering;
    }

    public IEnumerable<PathEvent> Trace(CancellationToken cancellationToken = default)
    {
        var findings = _c.Validate(_model);
        if (findings.Count > 0) throw new ModelValidationException(findings);
        return Run(cancellationToken);
    }

    private IEnumerable<PathEvent> Run(CancellationToken ct)
    {
        var clock = Stopwatch.StartNew();
        var sys = new EquilibriumSystem(_model, _c.TinyPivotRatio, _ordering);
        var corrector = new Corrector(sys);
        int n = sys.FreeCount;
        int[] monitored = _c.Monitored.Select(_model.FullDof).ToArray();
        int targetDof = _c.TargetDisplacementDof is { } td ? _model.FullDof(td) : _c.ControlDof is { } cd ? _model.FullDof(cd) : -1;
        int controlEq = _c.ControlDof is { } cdof ? _model.Dofs.EquationOf[_model.FullDof(cdof)] : -1;
        double psi2 = _c.Constraint == ArcLengthConstraint.Spherical ? 1.0 : 0.0;

        var u = (double[])_model.PrescribedDisplacement.Clone();
        double lambda = 0;
        var status = sys.Refactor(u);
        MechanismDetector.ThrowIfSingular(sys, status);

        var criticals = new List<CriticalPoint>();
        int points = 0, steps = 0, iterations = 0, cuts = 0;
        double maxLambda = 0, arc = 0;

        PathSummary Summary(StopReason reason, string message) => new(reason, message, maxLambda, lambda, points, steps,
            iterations, cuts, sys.Factorizations, sys.FactorizationTime, clock.Elapsed, criticals);

        // Start: bring the constant load and prescribed displacements to equilibrium at λ = 0.
        int startIterations = 0;
        double startResidual = 0;
        {
            var dU0 = new double[n];
            double dl0 = 0;
            var outcome = corrector.Correct(u, ref lambda, dU0, ref dl0, new StepConstraint(ConstraintKind.Load), _c.MaxIterations, _c.ResidualTolerance, ct);
            startIterations = corrector.Iterations;
            startResidual = corrector.ResidualNorm;
            iterations += startIterations;
            if (outcome == CorrectorOutcome.Cancelled) { yield return Summary(StopReason.Cancelled, "cancelled before the first point"); yield break; }
            if (outcome == CorrectorOutcome.Cut)
            {
                yield return Summary(StopReason.InitialStateFailed, $"the constant load and prescribed displacements could not be brought to equilibrium: {corrector.Detail}");
                yield break;
            }
            if (startIterations > 0)
            {
                status = sys.Refactor(u);
                MechanismDetector.ThrowIfSingular(sys, status);
            }
        }
        int inertia = sys.Factor.NegativePivotCount;
        var predictor = new double[n];
        sys.Factor.Solve(sys.ReferenceFree, predictor);
        yield return MakePoint(0, startIterations, startResidual, inertia, 0, _c.FullStateEvery > 0);
        points = 1;

        // First increment of the chosen method.
        double increment = _c.Method switch
        {
            ContinuationMethod.LoadControl => _c.InitialLoadIncrement,
            ContinuationMethod.DisplacementControl => _c.DisplacementIncrement,
            _ => _c.InitialLoadIncrement * Math.Sqrt(EquilibriumSystem.Dot(predictor, predictor) + psi2 * sys.ReferenceNormSquared),
        };
        double first = Math.Abs(increment), minInc = _c.MinIncrementRatio * first, maxInc = _c.MaxIncrementRatio * first;
        var prevU = (double[])u.Clone();
        double prevLambda = lambda;
        var lastDU = new double[n];
        double lastDLam = 0;
        bool havePrevious = false;
        var dU = new double[n];
        double[]? modeGuess = null;
        var midpoint = new double[u.Length];

        while (true)
        {
            if (points >= _c.MaxPoints) { yield return Summary(StopReason.PointLimitReached, $"reached the requested {_c.MaxPoints} points"); yield break; }
            if (ct.IsCancellationRequested) { yield return Summary(StopReason.Cancelled, "cancelled by the caller"); yield break; }
            if (_c.WallTimeLimit is { } wl && clock.Elapsed > wl) { yield return Summary(StopReason.WallTimeExceeded, $"wall-time limit of {wl.TotalSeconds:G3} s exceeded"); yield break; }
            if (_c.Method == ContinuationMethod.LoadControl && _c.TargetLoadFactor is { } tl && tl > lambda)
                increment = Math.Min(increment, tl - lambda);
            if (_c.Method == ContinuationMethod.DisplacementControl && _c.TargetDisplacement is { } tdv && targetDof >= 0)
            {
                double remaining = tdv - u[targetDof];
                if (Math.Sign(remaining) == Math.Sign(increment) && Math.Abs(increment) > Math.Abs(remaining)) increment = remaining;
            }
            steps++;
            int attempt = 0;
            CorrectorOutcome outcome;
            while (true)
            {
                // Predictor along the tangent of the last converged point: Δu = Δλ · K⁻¹F_ref.
                double dl = PredictLoadIncrement(increment, predictor, controlEq, psi2, sys, havePrevious, lastDU, lastDLam);
                Array.Copy(prevU, u, u.Length);
                lambda = prevLambda;
                for (int e = 0; e < n; e++) dU[e] = dl * predictor[e];
                sys.AddFree(u, dU);
                lambda += dl;
                double dLam = dl;
                var constraint = _c.Method switch
                {
                    ContinuationMethod.LoadControl => new StepConstraint(ConstraintKind.Load),
                    ContinuationMethod.DisplacementControl => new StepConstraint(ConstraintKind.Displacement, ControlEquation: controlEq),
                    _ => new StepConstraint(ConstraintKind.ArcLength, ArcLength: increment, PsiSquared: psi2),
                };
                outcome = corrector.Correct(u, ref lambda, dU, ref dLam, constraint, _c.MaxIterations, _c.ResidualTolerance, ct);
                iterations += corrector.Iterations;
                var reason = corrector.Reason;
                string detail = corrector.Detail;
                if (outcome == CorrectorOutcome.Converged && _c.Method == ContinuationMethod.LoadControl && JumpedOverUnstablePart(sys, prevU, u, inertia, midpoint))
                {
                    // Newton under load control can land on a remote branch after a snap-through, silently skipping
                    // the unstable part of the path and its critical points; reject such a step.
                    outcome = CorrectorOutcome.Cut;
                    reason = CutReason.PathJump;
                    detail = "the tangent half-way through the step has a different number of negative pivots: the step jumped over an unstable part of the path (snap-through)";
                }
                if (outcome != CorrectorOutcome.Cut) { lastDLam = dLam; break; }
                cuts++;
                attempt++;
                double rejected = increment;
                increment *= 0.5;
                bool giveUp = attempt > _c.MaxCutsPerStep || Math.Abs(increment) < minInc;
                yield return new StepCut(steps, attempt, reason, rejected, giveUp ? 0 : increment, corrector.Iterations, corrector.ResidualNorm, detail);
                if (giveUp)
                {
                    Array.Copy(prevU, u, u.Length);
                    lambda = prevLambda;
                    string hint = _c.Method == ContinuationMethod.LoadControl
                        ? " Load control cannot pass a limit point; use arc-length continuation to follow the path beyond it."
                        : "";
                    yield return Summary(StopReason.Diverged, $"step {steps} did not converge after {attempt} cuts ({reason}: {detail}).{hint}");
                    yield break;
                }
            }
            if (outcome == CorrectorOutcome.Cancelled)
            {
                Array.Copy(prevU, u, u.Length);
                lambda = prevLambda;
                yield return Summary(StopReason.Cancelled, "cancelled by the caller");
                yield break;
            }

            // Converged: one factorisation at the new point serves its inertia and the next predictor.
            Array.Copy(dU, lastDU, n);
            havePrevious = true;
            status = sys.Refactor(u);
            int newInertia = status == LdlStatus.ZeroPivot ? inertia : sys.Factor.NegativePivotCount;
            if (status != LdlStatus.ZeroPivot) sys.Factor.Solve(sys.ReferenceFree, predictor);
            arc += Math.Sqrt(EquilibriumSystem.Dot(dU, dU) + psi2 * lastDLam * lastDLam * sys.ReferenceNormSquared);
            maxLambda = Math.Max(maxLambda, lambda);
            int pointIterations = corrector.Iterations;
            bool crossed = newInertia != inertia && _c.DetectCriticalPoints;
            bool atEnd = StopRuleMet(u, lambda, targetDof) || points + 1 >= _c.MaxPoints;
            bool full = (_c.FullStateEvery > 0 && points % _c.FullStateEvery == 0) || (atEnd && _c.FullStateAtEnd);
            yield return MakePoint(points, pointIterations, corrector.ResidualNorm, newInertia, increment, full);
            points++;

            if (crossed)
            {
                var cp = LocateCritical(sys, corrector, prevU, prevLambda, inertia, u, lambda, newInertia, points - 2, points - 1, monitored, ref modeGuess, ct) with { Sequence = criticals.Count + 1 };
                criticals.Add(cp);
                yield return cp;
                // Location used the factorisation; restore the one at the current point for the next predictor.
                if (sys.Refactor(u) != LdlStatus.ZeroPivot) sys.Factor.Solve(sys.ReferenceFree, predictor);
                if (_c.StopAtFirstCriticalPoint)
                {
                    yield return Summary(StopReason.CriticalPointReached, $"stopped at the first critical point ({cp.Kind} at λ = {cp.LoadFactor:G8})");
                    yield break;
                }
            }
            inertia = newInertia;
            Array.Copy(u, prevU, u.Length);
            prevLambda = lambda;

            if (_c.TargetLoadFactor is { } target && lambda >= target)
            { yield return Summary(StopReason.TargetLoadFactorReached, $"reached the target load factor {target:G6} (λ = {lambda:G8})"); yield break; }
            if (TargetDisplacementMet(u, targetDof))
            { yield return Summary(StopReason.TargetDisplacementReached, $"reached the target displacement {_c.TargetDisplacement:G6}"); yield break; }

            // Adaptive increment: scale by (desired / used iterations)^½, at most halving or doubling (Crisfield 1981).
            double factor = Math.Sqrt((double)_c.DesiredIterations / Math.Max(1, pointIterations));
            increment *= Math.Clamp(factor, 0.5, 2.0);
            double mag = Math.Clamp(Math.Abs(increment), minInc, maxInc);
            increment = Math.CopySign(mag, increment);
        }

        PathPoint MakePoint(int index, int its, double res, int negatives, double inc, bool full) => new(
            index, lambda, arc, monitored.Select(d => u[d]).ToArray(), its, res, negatives,
            negatives == 0 ? Stability.Stable : Stability.Unstable, Math.Abs(inc), full ? sys.Snapshot(u, lambda) : null);
    }

    /// <summary>
    /// Load control only: counts the negative pivots of the tangent at the end and at the mid-state of a converged step.
    /// A mid-state count that matches neither end means the step passed over unstable states between two stable
    /// stretches, i.e. it snapped to a remote branch (passing a bifurcation changes the count once and is not flagged).
    /// </summary>
    private static bool JumpedOverUnstablePart(EquilibriumSystem sys, double[] start, double[] end, int startInertia, double[] midpoint)
    {
        if (sys.Refactor(end) == LdlStatus.ZeroPivot) return false;
        int endInertia = sys.Factor.NegativePivotCount;
        for (int i = 0; i < midpoint.Length; i++) midpoint[i] = 0.5 * (start[i] + end[i]);
        if (sys.Refactor(midpoint) == LdlStatus.ZeroPivot) return false;
        int mid = sys.Factor.NegativePivotCount;
        return mid != startInertia && mid != endInertia;
    }

    private bool StopRuleMet(double[] u, double lambda, int targetDof) =>
        (_c.TargetLoadFactor is { } t && lambda >= t) || TargetDisplacementMet(u, targetDof);

    private bool TargetDisplacementMet(double[] u, int targetDof)
    {
        if (_c.TargetDisplacement is not { } target || targetDof < 0) return false;
        double v = u[targetDof];
        return target > 0 ? v >= target * (1 - 1e-12) : v <= target * (1 - 1e-12);
    }

    /// <summary>Load-factor part of the predictor for the chosen method.</summary>
    private double PredictLoadIncrement(double increment, double[] predictor, int controlEq, double psi2, EquilibriumSystem sys,
        bool havePrevious, double[] lastDU, double lastDLam)
    {
        switch (_c.Method)
        {
            case ContinuationMethod.LoadControl: return increment;
            case ContinuationMethod.DisplacementControl: return increment / predictor[controlEq];
            default:
                double dl = increment / Math.Sqrt(EquilibriumSystem.Dot(predictor, predictor) + psi2 * sys.ReferenceNormSquared);
                // Keep going the same way along the path: the sign that makes the predictor point along the previous
                // increment (positive "work" of the step; Feng, Owen and Perić 1996), which passes limit points and snap-backs.
                if (havePrevious && EquilibriumSystem.Dot(lastDU, predictor) + psi2 * lastDLam * sys.ReferenceNormSquared < 0) dl = -dl;
                return dl;
        }
    }

    private CriticalPoint LocateCritical(EquilibriumSystem sys, Corrector corrector, double[] ua, double la, int na,
        double[] ub, double lb, int nb, int before, int after, int[] monitored, ref double[]? modeGuess, CancellationToken ct)
    {
        var locator = new CriticalPointLocator(sys, corrector, _c);
        var r = locator.Locate(ua, la, na, ub, lb, nb, modeGuess, ct);
        modeGuess = r.ModeFree;
        double alignment = Math.Abs(EquilibriumSystem.Dot(r.ModeFree, sys.ReferenceFree)) /
                           Math.Max(1e-300, Math.Sqrt(EquilibriumSystem.Dot(r.ModeFree, r.ModeFree) * sys.ReferenceNormSquared));
        var kind = alignment >= _c.BifurcationThreshold ? CriticalPointKind.LimitPoint : CriticalPointKind.Bifurcation;
        var modeFull = new double[3 * _model.NodeCount];
        sys.Model.Dofs.Scatter(r.ModeFree, modeFull);
        double peak = modeFull.MaxBy(Math.Abs);
        if (peak != 0) for (int i = 0; i < modeFull.Length; i++) modeFull[i] /= peak;
        return new CriticalPoint(0, kind, r.LoadFactor, la, lb, before, after, na, nb, r.Eigenvalue, alignment,
            monitored.Select(d => r.Displacement[d]).ToArray(), modeFull, r.Located, r.Tolerance,
            _c.FullStateAtCriticalPoints ? sys.Snapshot(r.Displacement, r.LoadFactor) : null);
    }
}
