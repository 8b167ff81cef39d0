using Google.Protobuf.WellKnownTypes;
using PathService.Engine.Continuation;
using Proto = PathService.Contracts.V1;

namespace PathService.Contracts.Mapping;

/// <summary>
/// Proto solver controls → engine controls, literally: an unset optional field keeps the engine's default. Limits and
/// caps (the default point budget, the time cap) are the application layer's policy, applied after the mapping.
/// </summary>
public static class ControlsMapper
{
    /// <param name="c">The caller's controls; null = all defaults.</param>
    public static SolverControls ToControls(Proto.SolverControls? c)
    {
        c ??= new Proto.SolverControls();
        var d = new SolverControls();
        TimeSpan? wall = c.WallTimeLimit is { } w ? ToTimeSpan(w) : null;
        return d with
        {
            Method = c.Method switch
            {
                Proto.ContinuationMethod.Unspecified => ContinuationMethod.ArcLength,
                Proto.ContinuationMethod.LoadControl => ContinuationMethod.LoadControl,
                Proto.ContinuationMethod.DisplacementControl => ContinuationMethod.DisplacementControl,
                Proto.ContinuationMethod.ArcLength => ContinuationMethod.ArcLength,
                _ => (ContinuationMethod)(int)c.Method, // the number sent (never 0..3): reported by the engine's validator
            },
            Constraint = c.Constraint switch
            {
                Proto.ArcLengthConstraint.Unspecified or Proto.ArcLengthConstraint.Cylindrical => ArcLengthConstraint.Cylindrical,
                Proto.ArcLengthConstraint.Spherical => ArcLengthConstraint.Spherical,
                _ => (ArcLengthConstraint)(int)c.Constraint, // the number sent (never 0..2)
            },
            InitialLoadIncrement = c.HasInitialLoadIncrement ? c.InitialLoadIncrement : d.InitialLoadIncrement,
            ControlDof = ModelMapper.ToDof(c.ControlDof),
            InitialDisplacementIncrement = c.InitialDisplacementIncrement,
            MinIncrementRatio = c.HasMinIncrementRatio ? c.MinIncrementRatio : d.MinIncrementRatio,
            MaxIncrementRatio = c.HasMaxIncrementRatio ? c.MaxIncrementRatio : d.MaxIncrementRatio,
            DesiredIterations = c.HasDesiredIterations ? c.DesiredIterations : d.DesiredIterations,
            MaxIterations = c.HasMaxIterations ? c.MaxIterations : d.MaxIterations,
            ResidualTolerance = c.HasResidualTolerance ? c.ResidualTolerance : d.ResidualTolerance,
            MaxCutsPerStep = c.HasMaxCutsPerStep ? c.MaxCutsPerStep : d.MaxCutsPerStep,
            MaxPoints = c.HasMaxPoints ? c.MaxPoints : d.MaxPoints,
            TargetLoadFactor = c.HasTargetLoadFactor ? c.TargetLoadFactor : null,
            TargetDisplacementDof = ModelMapper.ToDof(c.TargetDisplacementDof),
            TargetDisplacement = c.HasTargetDisplacement ? c.TargetDisplacement : null,
            StopAtFirstCriticalPoint = c.StopAtFirstCriticalPoint,
            WallTimeLimit = wall,
            Monitored = c.Monitored.Select(m => ModelMapper.ToDof(m)!).ToArray(),
            DetectCriticalPoints = c.HasDetectCriticalPoints ? c.DetectCriticalPoints : d.DetectCriticalPoints,
            CriticalPointTolerance = c.HasCriticalPointTolerance ? c.CriticalPointTolerance : d.CriticalPointTolerance,
            MaxLocatedCriticalPoints = c.HasMaxLocatedCriticalPoints ? c.MaxLocatedCriticalPoints : d.MaxLocatedCriticalPoints,
            FallbackAlignmentThreshold = c.HasFallbackAlignmentThreshold ? c.FallbackAlignmentThreshold : d.FallbackAlignmentThreshold,
            SingularPivotRatio = c.HasSingularPivotRatio ? c.SingularPivotRatio : d.SingularPivotRatio,
            FullStateEvery = c.FullStateEvery,
            SwitchBranches = c.SwitchBranches,
            ModifiedNewton = c.ModifiedNewton,
            SecondaryBranchPoints = c.HasSecondaryBranchPoints ? c.SecondaryBranchPoints : d.SecondaryBranchPoints,
            BranchPerturbation = c.HasBranchPerturbation ? c.BranchPerturbation : d.BranchPerturbation,
            FullStateAtCriticalPoints = c.HasFullStateAtCriticalPoints ? c.FullStateAtCriticalPoints : d.FullStateAtCriticalPoints,
            FullStateAtEnd = c.HasFullStateAtEnd ? c.FullStateAtEnd : d.FullStateAtEnd,
            DesignSensitivities = c.DesignSensitivities,
            DesignDirection = ToChanges(c.DesignDirection),
        };
    }

    /// <summary>The caller's design direction by ids; ids and values are checked against the model by the controls' validation.</summary>
    private static Engine.Stability.DesignChanges? ToChanges(Proto.DesignDirection? d) => d is null ? null : new(
        d.Bars.Select(b => new Engine.Stability.BarChange(b.Bar, b.Area, b.ElasticModulus)).ToArray(),
        d.Nodes.Select(n => new Engine.Stability.NodeChange(n.Node, n.X, n.Y, n.Z)).ToArray(),
        d.GroundSprings.Select(s => new Engine.Stability.SpringChange(s.Spring, s.Stiffness)).ToArray(),
        d.LinkSprings.Select(s => new Engine.Stability.SpringChange(s.Spring, s.Stiffness)).ToArray());

    /// <summary>A malformed Duration (seconds and nanos of different sign, out of range) becomes a non-positive limit the validator rejects.</summary>
    private static TimeSpan ToTimeSpan(Duration d)
    {
        try { return d.ToTimeSpan(); }
        catch (InvalidOperationException) { return TimeSpan.Zero; }
    }
}
