namespace PathService.Engine.Continuation;

/// <summary>One item of a traced path, in the order it happened: points, cut steps, critical points, and a closing summary.</summary>
public abstract record PathEvent;

/// <summary>Stability of an equilibrium point from the inertia of its tangent (Sylvester's law of inertia).</summary>
public enum Stability { Stable, Unstable }

/// <summary>
/// Full nodal and member state at a point. Vectors are in model order; displacements and reactions are in the layout of
/// the model's <see cref="Model.DofMap"/>: 3 per node (translations; forces), 6 at rotating nodes (then also the rotation
/// vector of the node; moments). Without beams that is 3 per node.
/// </summary>
public sealed record StructureState(double[] Displacements, double[] BarForces, double[] BarStrains, double[] Reactions)
{
    /// <summary>Member-end actions of every beam element (<see cref="Model.BeamElements"/> order), 12 each, in the element's
    /// current local axes: force and moment on the member at the start (F1x, F1y, F1z, M1x, M1y, M1z), then at the end
    /// (F2x = N, tension positive; Mx torsion, My and Mz bending).</summary>
    public double[] BeamEndForces { get; init; } = [];
}

/// <summary>A converged equilibrium point.</summary>
/// <param name="Index">0 for the start (λ = 0 with the constant load applied), then 1, 2, ...</param>
/// <param name="ArcLength">Cumulative length of the path in the (u, ψλF) metric of the method.</param>
/// <param name="Monitored">Monitored displacement components, in the order the controls list them.</param>
/// <param name="NegativePivots">Number of negative pivots of LDLᵀ of the tangent at this point.</param>
public sealed record PathPoint(
    int Index, double LoadFactor, double ArcLength, double[] Monitored, int Iterations, double ResidualNorm,
    int NegativePivots, Stability Stability, double Increment, StructureState? State) : PathEvent
{
    /// <summary>0 for the primary path, 1, 2, ... for secondary branches entered at bifurcations.</summary>
    public int Branch { get; init; }
}

public enum CutReason
{
    MaxIterations,
    ResidualGrowth,
    NonFiniteValue,
    ComplexRoots,
    SingularTangent,
    /// <summary>Load control converged on a distant branch (the structure snapped through): rejected so that the path is not skipped.</summary>
    PathJump,
    /// <summary>The path turned back within the step too sharply for a critical point in it to be located on the step's chord; retried shorter.</summary>
    SharpTurn,
    /// <summary>A critical point in the step could not be located: no equilibrium state was found on one of the hyperplanes
    /// across the step (e.g. a long step through a snap with large rotations); retried shorter.</summary>
    LocationFailed,
    /// <summary>More eigenvalues crossed zero within the step than one step resolves well (see the walker's limit); retried shorter.</summary>
    CrowdedCrossings,
}

/// <summary>A step that failed to converge and was retried with a smaller increment.</summary>
public sealed record StepCut(int Step, int Attempt, CutReason Reason, double RejectedIncrement, double NextIncrement, int Iterations, double ResidualNorm, string Detail) : PathEvent;

/// <summary>Kind of a critical point; <see cref="Unresolved"/>: the count changed within a step that was not resolved into
/// its critical points (<see cref="SolverControls.MaxLocatedCriticalPoints"/> reached), so how many there are and of which
/// kind is not known.</summary>
public enum CriticalPointKind { LimitPoint, Bifurcation, Unresolved }

/// <summary>
/// A critical point bracketed by a change of the negative-pivot count between two converged points and then
/// located on the path by regula falsi on the tangent's eigenvalue nearest zero. A step with several changes of the count
/// is resolved into several critical points; NegativePivotsBefore/After are the counts on either side of this one, so the
/// changes of all critical points between two path points add up to the change between those points.
/// </summary>
/// <param name="Kind">Limit point when λ turns back along the path there (dλ/ds changes sign), bifurcation when it passes on.</param>
/// <param name="LoadAlignment">|φ·F_ref| / (‖φ‖‖F_ref‖): information only (≈ 0 at a bifurcation; at a limit point it can be small
/// on a large model with a local mode, ~1/√N for a mode at one of N equally loaded nodes).</param>
/// <param name="Mode">Critical (near-null) mode, full vector of 3 per node, largest component 1.</param>
/// <param name="LoadFactorBefore">λ of the converged path point before the critical point (the bracket's first end).</param>
/// <param name="Located">Whether the estimated λ error (Tolerance) meets the asked relative tolerance; when false,
/// λ_cr is the best estimate inside the bracket and LocationNote says why.</param>
/// <param name="Tolerance">Estimated relative error of λ_cr, |λ_cr − λ*| / max(1, |λ_cr|), from the last location trials.</param>
public sealed record CriticalPoint(
    int Sequence, CriticalPointKind Kind, double LoadFactor, double LoadFactorBefore, double LoadFactorAfter,
    int PointBefore, int PointAfter, int NegativePivotsBefore, int NegativePivotsAfter,
    double LowestEigenvalue, double LoadAlignment, double[] Monitored, double[] Mode, bool Located, double Tolerance,
    StructureState? State) : PathEvent
{
    /// <summary>The branch on which the critical point was found.</summary>
    public int Branch { get; init; }

    /// <summary>Number of eigenvalues crossing zero at this λ: 1 for a limit point or simple bifurcation, k for a bifurcation of multiplicity k.</summary>
    public int Multiplicity { get; init; } = 1;

    /// <summary>The other k − 1 critical modes of a multiple bifurcation (same normalisation as <see cref="Mode"/>, orthogonal to it); empty when simple.</summary>
    public IReadOnlyList<double[]> AdditionalModes { get; init; } = [];

    /// <summary>Why the location did not meet the tolerance (empty when <see cref="Located"/>).</summary>
    public string LocationNote { get; init; } = "";

    /// <summary>Design sensitivities of λ_cr (theory §13) when the controls ask for them and the point is located; else null.</summary>
    public PathService.Engine.Stability.CriticalLoadSensitivity? Sensitivity { get; init; }

    /// <summary>dλ_cr along the caller's design direction (<see cref="SolverControls.DesignDirection"/>), when given and defined.</summary>
    public double? DirectionalSensitivity { get; init; }

    /// <summary>Engine-internal: why the walker should shorten the step to locate this point (null: no need).</summary>
    internal CutReason? RetryShorter { get; init; }
}

/// <summary>
/// A monitored displacement component reaches an extreme value along the path and turns back (its increment changes sign
/// between consecutive steps, e.g. a snap-back seen in that component). Located by a quadratic through the three points
/// around the turn, in arc length.
/// </summary>
/// <param name="Sequence">1-based number of the turn along the trace.</param>
/// <param name="MonitoredIndex">Index of the component in the controls' monitored list.</param>
/// <param name="Value">The extreme value of the component (length unit).</param>
/// <param name="LoadFactor">λ at the turn.</param>
/// <param name="PointBefore">Index of the path point before the turn.</param>
/// <param name="PointAfter">Index of the path point after the turn.</param>
public sealed record DisplacementTurn(int Sequence, int MonitoredIndex, double Value, double LoadFactor, int PointBefore, int PointAfter) : PathEvent
{
    /// <summary>The branch on which the turn was found.</summary>
    public int Branch { get; init; }
}

/// <summary>A secondary branch entered at a bifurcation by a perturbation along the critical mode.</summary>
public sealed record BranchStarted(int Branch, int FromBranch, int CriticalPointSequence, double LoadFactor) : PathEvent;

/// <summary>The end of a secondary branch; the trace then resumes the branch it came from.</summary>
public sealed record BranchEnded(int Branch, StopReason Reason, string Message) : PathEvent;

public enum StopReason
{
    TargetLoadFactorReached,
    TargetDisplacementReached,
    PointLimitReached,
    CriticalPointReached,
    Cancelled,
    WallTimeExceeded,
    /// <summary>A step failed after the permitted number of cuts (or the increment fell below its minimum).</summary>
    Diverged,
    /// <summary>A secondary branch used up its share of points (branch ends only).</summary>
    BranchPointsReached,
    /// <summary>No equilibrium point off the primary path could be found near the bifurcation (branch ends only).</summary>
    BranchNotFound,
    /// <summary>The constant load (or prescribed displacements) could not be brought to equilibrium.</summary>
    InitialStateFailed,
}

/// <summary>The closing record of a trace.</summary>
public sealed record PathSummary(
    StopReason Reason, string Message, double MaxLoadFactor, double FinalLoadFactor, int Points, int Steps,
    int Iterations, int Cuts, int Factorizations, TimeSpan FactorizationTime, TimeSpan WallTime,
    IReadOnlyList<CriticalPoint> CriticalPoints) : PathEvent
{
    /// <summary>Number of branches followed (1 without branch switching).</summary>
    public int Branches { get; init; } = 1;

    /// <summary>Whether the trace ended by one of the caller's own stopping rules (not by failure or cancellation).</summary>
    public bool Completed => Reason is StopReason.TargetLoadFactorReached or StopReason.TargetDisplacementReached
        or StopReason.PointLimitReached or StopReason.CriticalPointReached;

    /// <summary>
    /// Iterative-refinement steps taken because a solve with the tangent's LDLᵀ factor had a normwise backward error
    /// above 1e-12 (<see cref="Sparse.RefinedFactorization"/>); 0 in a well-conditioned trace.
    /// </summary>
    public int Refinements { get; init; }

    /// <summary>Wall time spent resolving steps into their critical points (location, modes, full states and
    /// sensitivities at the points), the factorisations made for it and their time; zero without critical points.</summary>
    public TimeSpan CriticalPointTime { get; init; }
    public int CriticalPointFactorizations { get; init; }
    /// <summary>Solves with the factor (each right-hand side of a two-column solve counted) made by critical-point work.</summary>
    public long CriticalPointSolves { get; init; }
    /// <summary>Trial states of critical-point location, and how many of them were placed by Newton's step on the crossing
    /// eigenvalue (the rest by regula falsi or bisection, the fallback).</summary>
    public int CriticalPointTrials { get; init; }
    public int CriticalPointNewtonTrials { get; init; }
    public TimeSpan CriticalPointFactorizationTime { get; init; }
}
