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


    public PathTracer(StructuralModel model, SolverControls controls, OrderingMethod ordering = OrderingMethod.Automatic)
    {
        _model = model;
        _c = controls;
        _ordering = ordering;
    }

    /// <summary>Backward error above which solves are refined (tests lower it to make refinement act).</summary>
    internal double BackwardErrorBound { get; init; } = RefinedFactorization.DefaultBound;

    public IEnumerable<PathEvent> Trace(CancellationToken cancellationToken = default)
    {
        var findings = _c.Validate(_model);
        if (findings.Count > 0) throw new ModelValidationException(findings);
        return Run(cancellationToken);
    }

    private IEnumerable<PathEvent> Run(CancellationToken ct)
    {
        long started = System.Diagnostics.Stopwatch.GetTimestamp();
        var sys = new EquilibriumSystem(_model, _c.SingularPivotRatio, _ordering, BackwardErrorBound);
        var s = new TraceSession(_model, _c, sys, ct, started);
        int n = sys.FreeCount;
        var u = (double[])_model.PrescribedDisplacement.Clone();
        MechanismDetector.ThrowIfSingular(sys, sys.Refactor(u));

        // Start: bring the constant load and prescribed displacements to equilibrium at λ = 0.
        double lambda = 0, dl0 = 0;
        var outcome = s.Corrector.Correct(u, ref lambda, new double[n], ref dl0, new StepConstraint(ConstraintKind.Load), _c.MaxIterations, _c.ResidualTolerance, ct);
        int startIterations = s.Corrector.Iterations;
        s.Iterations += startIterations;
        if (outcome == CorrectorOutcome.Cancelled) { yield return s.Summary(StopReason.Cancelled, "cancelled before the first point"); yield break; }
        if (outcome == CorrectorOutcome.Cut)
        {
            yield return s.Summary(StopReason.InitialStateFailed, $"the constant load and prescribed displacements could not be brought to equilibrium: {s.Corrector.Detail}");
            yield break;
        }
        if (startIterations > 0) MechanismDetector.ThrowIfSingular(sys, sys.Refactor(u));

        var primary = new BranchState(0, u, 0.0, sys.Factor.NegativePivotCount, 0, n);
        sys.Factor.Solve(sys.ReferenceFree, primary.Predictor);
        s.Points = 1;
        primary.PointsOnBranch = 1;
        yield return new PathPoint(0, 0.0, 0.0, s.Monitored.Select(d => u[d]).ToArray(), startIterations, s.Corrector.ResidualNorm,
            primary.Inertia, primary.Inertia == 0 ? Stability.Stable : Stability.Unstable, 0, _c.FullStateEvery > 0 ? sys.Snapshot(u, 0) : null);

        // First increment of the chosen method; arc-length derives Δs₀ from the first load increment.
        primary.Increment = _c.Method switch
        {
            ContinuationMethod.LoadControl => _c.InitialLoadIncrement,
            ContinuationMethod.DisplacementControl => _c.InitialDisplacementIncrement,
            _ => _c.InitialLoadIncrement * Math.Sqrt(EquilibriumSystem.Dot(primary.Predictor, primary.Predictor) + s.PsiSquared * sys.ReferenceNormSquared),
        };
        var walker = new BranchWalker(s);
        walker.SetIncrementBounds(primary.Increment);
        foreach (var e in walker.Walk(primary, int.MaxValue)) yield return e;
        var (reason, message) = walker.EndReason ?? (StopReason.PointLimitReached, "ended");
        yield return s.Summary(reason, message);
    }
}
