using PathService.Engine.Model;

namespace PathService.Engine.Continuation;

/// <summary>How the load factor and the displacements are advanced from one converged point to the next.</summary>
public enum ContinuationMethod
{
    /// <summary>Newton-Raphson at prescribed load-factor increments; cannot pass a limit point.</summary>
    LoadControl,
    /// <summary>Newton-Raphson with one displacement component prescribed per step; passes load limit points but not snap-backs.</summary>
    DisplacementControl,
    /// <summary>Arc-length continuation (Riks 1979; Crisfield 1981): passes limit points and snap-backs.</summary>
    ArcLength,
}

/// <summary>The arc-length constraint: cylindrical (displacements only, ψ = 0) or spherical (ψ = 1, load term included).</summary>
public enum ArcLengthConstraint { Cylindrical, Spherical }

/// <summary>Solver controls. Every number has a default suitable for a well-scaled model.</summary>
public sealed record SolverControls
{
    public ContinuationMethod Method { get; init; } = ContinuationMethod.ArcLength;
    public ArcLengthConstraint Constraint { get; init; } = ArcLengthConstraint.Cylindrical;

    /// <summary>Load-factor increment of the first step. Arc-length derives its first arc length Δs₀ from it.</summary>
    public double InitialLoadIncrement { get; init; } = 0.05;
    /// <summary>Displacement control: the controlled component and its first increment (length unit).</summary>
    public DofReference? ControlDof { get; init; }
    public double InitialDisplacementIncrement { get; init; }

    /// <summary>Increments are kept within [min, max] × the first increment.</summary>
    public double MinIncrementRatio { get; init; } = 1e-4;
    public double MaxIncrementRatio { get; init; } = 10.0;
    /// <summary>Iterations per step the adaptive rule aims at: next = current·(desired/used)^½ (Crisfield 1981; Ramm 1981).</summary>
    public int DesiredIterations { get; init; } = 5;
    public int MaxIterations { get; init; } = 25;
    /// <summary>Convergence: ‖r‖ ≤ tol · max(‖F_const + λF_ref‖, ‖F_ref‖) over the free DOFs.</summary>
    public double ResidualTolerance { get; init; } = 1e-8;
    /// <summary>
    /// Modified Newton: iterate with the tangent factorised at the last converged point instead of refactorising every
    /// iteration. Fewer factorisations, more (linearly converging) iterations; worthwhile on large models with mild
    /// nonlinearity. Raise <see cref="MaxIterations"/> with it.
    /// </summary>
    public bool ModifiedNewton { get; init; }
    /// <summary>Consecutive halvings of one step before the trace stops as diverged.</summary>
    public int MaxCutsPerStep { get; init; } = 10;

    /// <summary>Stopping rules: whichever is met first ends the trace.</summary>
    public int MaxPoints { get; init; } = 100;
    public double? TargetLoadFactor { get; init; }
    public DofReference? TargetDisplacementDof { get; init; }
    public double? TargetDisplacement { get; init; }
    public bool StopAtFirstCriticalPoint { get; init; }
    public TimeSpan? WallTimeLimit { get; init; }

    /// <summary>Displacement components reported at every point (in this order).</summary>
    public IReadOnlyList<DofReference> Monitored { get; init; } = [];

    /// <summary>Critical points: detect by inertia change, locate λ_cr to this relative tolerance (estimated error, see CriticalPoint.Tolerance).</summary>
    public bool DetectCriticalPoints { get; init; } = true;
    public double CriticalPointTolerance { get; init; } = 1e-9;
    /// <summary>
    /// Locate at most this many critical points along the trace (all branches); null: every one. Once reached, a step
    /// across which the count changes is reported as one <see cref="CriticalPointKind.Unresolved"/> critical point without
    /// any location work (no factorisation, no eigenvalue). A step's critical points are located together, so the last
    /// located step can take the total past the limit. 0: detection only.
    /// </summary>
    public int? MaxLocatedCriticalPoints { get; init; }
    /// <summary>
    /// Fallback classification only: the kind is decided by whether λ turns back at the point; when that cannot be
    /// judged (a step without displacement change), |φ·F_ref|/(‖φ‖‖F_ref‖) below this marks a bifurcation, above it a
    /// limit point (common practice, no source).
    /// </summary>
    public double FallbackAlignmentThreshold { get; init; } = 1e-3;
    /// <summary>Relative pivot size below which the tangent counts as singular (mechanism at the start); range (0, 1e-3].</summary>
    public double SingularPivotRatio { get; init; } = 1e-11;

    /// <summary>
    /// Branch switching: at each bifurcation on the primary path, follow the secondary branch for
    /// <see cref="SecondaryBranchPoints"/> points (arc-length only), then resume the primary path.
    /// </summary>
    public bool SwitchBranches { get; init; }
    public int SecondaryBranchPoints { get; init; } = 20;
    /// <summary>Size of the first step onto the secondary branch, as a fraction of the current arc length.</summary>
    public double BranchPerturbation { get; init; } = 1.0;

    /// <summary>Full nodal and member state: every N-th point (0 = never), at critical points, at the last point.</summary>
    public int FullStateEvery { get; init; }
    public bool FullStateAtCriticalPoints { get; init; } = true;
    public bool FullStateAtEnd { get; init; } = true;

    /// <summary>Design sensitivities of λ_cr at every located critical point (theory §13): per bar, node and spring.</summary>
    public bool DesignSensitivities { get; init; }

    /// <summary>A design direction over the model's parameters, by ids; each located critical point then also reports
    /// dλ_cr along it. Needs <see cref="DesignSensitivities"/>.</summary>
    public PathService.Engine.Stability.DesignChanges? DesignDirection { get; init; }

    /// <summary>Checks the controls against the model; returns every problem with its field name.</summary>
    public IReadOnlyList<ValidationFinding> Validate(StructuralModel model)
    {
        var f = new List<ValidationFinding>();
        // One code per kind of fault, so a client can switch on it: a value outside its range, a needed value missing,
        // values that contradict each other or the model, a number that names no option of the contract.
        void Add(FindingCode code, string field, string msg) => f.Add(new(FindingSeverity.Error, code, $"controls.{field}", null, msg));
        void Err(string field, string msg) => Add(FindingCode.ControlOutOfRange, field, msg);
        void Missing(string field, string msg) => Add(FindingCode.ControlMissing, field, msg);
        void Conflict(string field, string msg) => Add(FindingCode.ControlConflict, field, msg);
        void Positive(double v, string field) { if (!double.IsFinite(v) || v <= 0) Err(field, $"{field} is {v}; it must be a positive finite number"); }
        void Dof(DofReference? d, string field)
        {
            if (d is null) return;
            if (!model.TryGetNode(d.Node, out int n)) { f.Add(new(FindingSeverity.Error, FindingCode.UnknownNode, $"controls.{field}.node", d.Node, $"{field} refers to node '{d.Node}', which is not defined")); return; }
            if (d.Direction is not (Axis.X or Axis.Y or Axis.Z or Axis.RotationX or Axis.RotationY or Axis.RotationZ)) { f.Add(new(FindingSeverity.Error, FindingCode.InvalidDirection, $"controls.{field}.direction", d.Node, $"{field} direction is not one of x, y, z or a rotation about x, y, z")); return; }
            if (!model.Dofs.Has(n, d.Direction)) { f.Add(new(FindingSeverity.Error, FindingCode.RotationWithoutRotationalUnknowns, $"controls.{field}.direction", d.Node, $"{field} asks for {d.Direction} of node '{d.Node}', which has no rotational unknowns (no beam end holding a rotation connects to it)")); return; }
            if (model.Dofs.EquationOf[model.Dofs.Full(n, d.Direction)] < 0 && field == "control_dof")
                f.Add(new(FindingSeverity.Error, FindingCode.ControlConflict, $"controls.{field}", d.Node, $"control DOF {d} is restrained by a support; choose a free direction"));
        }
        if (Method is not (ContinuationMethod.LoadControl or ContinuationMethod.DisplacementControl or ContinuationMethod.ArcLength)) Add(FindingCode.UnknownOption, "method", $"unknown continuation method {(int)Method}");
        if (Constraint is not (ArcLengthConstraint.Cylindrical or ArcLengthConstraint.Spherical)) Add(FindingCode.UnknownOption, "constraint", $"unknown arc-length constraint {(int)Constraint}");
        if (Method != ContinuationMethod.DisplacementControl) Positive(InitialLoadIncrement, "initial_load_increment");
        if (Method == ContinuationMethod.DisplacementControl)
        {
            if (ControlDof is null) Missing("control_dof", "displacement control needs a control DOF (node and direction)");
            if (!double.IsFinite(InitialDisplacementIncrement) || InitialDisplacementIncrement == 0) Err("initial_displacement_increment", $"initial_displacement_increment is {InitialDisplacementIncrement}; it must be non-zero and finite");
        }
        Dof(ControlDof, "control_dof");
        Dof(TargetDisplacementDof, "target_displacement_dof");
        for (int i = 0; i < Monitored.Count; i++) Dof(Monitored[i], $"monitored[{i}]");
        Positive(MinIncrementRatio, "min_increment_ratio");
        Positive(MaxIncrementRatio, "max_increment_ratio");
        if (MinIncrementRatio > 1 || MaxIncrementRatio < 1) Err("min_increment_ratio", "increment bounds must bracket the first increment (min ≤ 1 ≤ max)");
        if (DesiredIterations < 1 || DesiredIterations > 100) Err("desired_iterations", $"desired_iterations is {DesiredIterations}; it must be 1..100");
        if (MaxIterations < 1 || MaxIterations > 500) Err("max_iterations", $"max_iterations is {MaxIterations}; it must be 1..500");
        if (!double.IsFinite(ResidualTolerance) || ResidualTolerance <= 0 || ResidualTolerance >= 1) Err("residual_tolerance", $"residual_tolerance is {ResidualTolerance}; it must lie in (0, 1)");
        if (MaxCutsPerStep < 0 || MaxCutsPerStep > 60) Err("max_cuts_per_step", $"max_cuts_per_step is {MaxCutsPerStep}; it must be 0..60");
        if (MaxPoints < 1) Err("max_points", $"max_points is {MaxPoints}; it must be at least 1");
        if (TargetLoadFactor is { } t && !double.IsFinite(t)) Err("target_load_factor", "target_load_factor must be finite");
        if (TargetDisplacement is { } td && (!double.IsFinite(td) || td == 0)) Err("target_displacement", "target_displacement must be finite and non-zero");
        if (TargetDisplacement is not null && TargetDisplacementDof is null && ControlDof is null) Missing("target_displacement_dof", "a target displacement needs the DOF it applies to");
        if (!double.IsFinite(CriticalPointTolerance) || CriticalPointTolerance <= 0 || CriticalPointTolerance >= 0.1) Err("critical_point_tolerance", "critical_point_tolerance must lie in (0, 0.1)");
        if (MaxLocatedCriticalPoints is < 0) Err("max_located_critical_points", $"max_located_critical_points is {MaxLocatedCriticalPoints}; it must be zero (detection only) or positive");
        if (!double.IsFinite(FallbackAlignmentThreshold) || FallbackAlignmentThreshold <= 0 || FallbackAlignmentThreshold >= 1) Err("fallback_alignment_threshold", "fallback_alignment_threshold must lie in (0, 1)");
        if (!double.IsFinite(SingularPivotRatio) || SingularPivotRatio <= 0 || SingularPivotRatio > 1e-3) Err("singular_pivot_ratio", $"singular_pivot_ratio is {SingularPivotRatio}; it must lie in (0, 1e-3]");
        if (SwitchBranches && Method != ContinuationMethod.ArcLength) Conflict("switch_branches", "branch switching needs the arc-length method");
        if (SecondaryBranchPoints < 1) Err("secondary_branch_points", $"secondary_branch_points is {SecondaryBranchPoints}; it must be at least 1");
        if (!double.IsFinite(BranchPerturbation) || BranchPerturbation <= 0 || BranchPerturbation > 100) Err("branch_perturbation", "branch_perturbation must lie in (0, 100]");
        if (FullStateEvery < 0) Err("full_state_every", "full_state_every must be zero or positive");
        if (WallTimeLimit is { } w && w <= TimeSpan.Zero) Err("wall_time_limit", "wall_time_limit must be positive");
        if (DesignSensitivities && model.HasBeams) Conflict("design_sensitivities", "design sensitivities are derived for bars only; this model has beams");
        if (DesignDirection is { } dd)
        {
            if (!DesignSensitivities) Missing("design_sensitivities", "a design direction needs design_sensitivities");
            dd.Resolve(model, (code, field, message) => Add(code, field, message));
        }
        return f;
    }
}
