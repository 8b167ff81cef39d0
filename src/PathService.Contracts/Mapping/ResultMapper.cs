using Google.Protobuf.WellKnownTypes;
using PathService.Engine.Analyses;
using PathService.Engine.Continuation;
using PathService.Engine.Model;
using Proto = PathService.Contracts.V1;

namespace PathService.Contracts.Mapping;

/// <summary>
/// Engine results → proto messages. Engine vectors are in model order in the layout of the model's DofMap (3 entries per
/// node, 6 at a node with rotational unknowns); the messages carry the caller's ids instead, so a client never has to
/// rely on positions.
/// </summary>
public sealed class ResultMapper(StructuralModel model, IReadOnlyList<DofReference> monitored)
{
    public Proto.TracePathResponse ToResponse(PathEvent e) => e switch
    {
        PathPoint p => new() { Point = ToPoint(p) },
        StepCut c => new() { StepCut = ToCut(c) },
        CriticalPoint cp => new() { CriticalPoint = ToCritical(cp) },
        PathSummary s => new() { Summary = ToSummary(s) },
        BranchStarted b => new() { BranchStarted = new Proto.BranchStarted { Branch = b.Branch, FromBranch = b.FromBranch, CriticalPointSequence = b.CriticalPointSequence, LoadFactor = b.LoadFactor } },
        MemberEvent me => new() { MemberEvent = ToMemberEvent(me) },
        BranchEnded b => new() { BranchEnded = new Proto.BranchEnded { Branch = b.Branch, Reason = ToReason(b.Reason), Message = b.Message } },
        DisplacementTurn t => new() { DisplacementTurn = ToTurn(t) },
        _ => throw new NotSupportedException($"unknown path event {e.GetType().Name}"),
    };

    public Proto.PathPoint ToPoint(PathPoint p)
    {
        var m = new Proto.PathPoint
        {
            Index = p.Index, LoadFactor = p.LoadFactor, ArcLength = p.ArcLength, Iterations = p.Iterations,
            ResidualNorm = p.ResidualNorm, NegativePivots = p.NegativePivots, Increment = p.Increment, Branch = p.Branch,
            Stability = p.Stability == Engine.Continuation.Stability.Stable ? Proto.Stability.Stable : Proto.Stability.Unstable,
            State = p.State is null ? null : ToState(p.State),
        };
        AddMonitored(m.Monitored, p.Monitored);
        return m;
    }

    public static Proto.StepCut ToCut(StepCut c) => new()
    {
        Step = c.Step, Attempt = c.Attempt, RejectedIncrement = c.RejectedIncrement, NextIncrement = c.NextIncrement,
        Iterations = c.Iterations, ResidualNorm = c.ResidualNorm, Detail = c.Detail,
        Reason = c.Reason switch
        {
            CutReason.MaxIterations => Proto.CutReason.MaxIterations,
            CutReason.ResidualGrowth => Proto.CutReason.ResidualGrowth,
            CutReason.NonFiniteValue => Proto.CutReason.NonFiniteValue,
            CutReason.ComplexRoots => Proto.CutReason.ComplexRoots,
            CutReason.SingularTangent => Proto.CutReason.SingularTangent,
            CutReason.PathJump => Proto.CutReason.PathJump,
            CutReason.SharpTurn => Proto.CutReason.SharpTurn,
            CutReason.LocationFailed => Proto.CutReason.LocationFailed,
            CutReason.CrowdedCrossings => Proto.CutReason.CrowdedCrossings,
            _ => Proto.CutReason.Unspecified,
        },
    };

    public Proto.CriticalPoint ToCritical(CriticalPoint c)
    {
        var m = new Proto.CriticalPoint
        {
            Sequence = c.Sequence, Branch = c.Branch,
            Kind = ToKind(c.Kind),
            LoadFactor = c.LoadFactor, LoadFactorBefore = c.LoadFactorBefore, LoadFactorAfter = c.LoadFactorAfter,
            PointBefore = c.PointBefore, PointAfter = c.PointAfter,
            NegativePivotsBefore = c.NegativePivotsBefore, NegativePivotsAfter = c.NegativePivotsAfter,
            LowestEigenvalue = c.LowestEigenvalue, LoadAlignment = c.LoadAlignment, Located = c.Located, Tolerance = c.Tolerance,
            State = c.State is null ? null : ToState(c.State),
            Multiplicity = c.Multiplicity, LocationNote = c.LocationNote,
        };
        AddMonitored(m.Monitored, c.Monitored);
        AddVectors(m.Mode, c.Mode);
        foreach (var extra in c.AdditionalModes)
        {
            var shape = new Proto.ModeShape();
            AddVectors(shape.Vectors, extra);
            m.AdditionalModes.Add(shape);
        }
        if (c.Sensitivity is { } s) m.Sensitivity = ToSensitivity(s, c.DirectionalSensitivity);
        return m;
    }

    /// <summary>Design sensitivities by id, in model order.</summary>
    public Proto.DesignSensitivity ToSensitivity(Engine.Stability.CriticalLoadSensitivity s, double? directional)
    {
        var m = new Proto.DesignSensitivity
        {
            Defined = s.Defined, Note = s.Note, Multiplicity = s.Multiplicity,
            Method = s.Method == Engine.Stability.SensitivityMethod.LimitPoint ? Proto.SensitivityMethod.LimitPoint : Proto.SensitivityMethod.ZeroEigenvalue,
        };
        if (directional is { } d) m.Directional = d;
        if (!s.Defined) return m;
        for (int b = 0; b < model.BarCount; b++)
            m.Bars.Add(new Proto.BarSensitivity { Bar = model.BarIds[b], Area = s.BarArea[b], ElasticModulus = s.BarModulus[b], Volume = s.BarVolume[b], BreaksBifurcation = s.Breaks.Bars[b] });
        for (int n = 0; n < model.NodeCount; n++)
            m.Nodes.Add(new Proto.NodeSensitivity { Node = model.NodeIds[n], X = s.NodeCoordinates[3 * n], Y = s.NodeCoordinates[3 * n + 1], Z = s.NodeCoordinates[3 * n + 2], BreaksBifurcationAlong = s.Breaks.NodeAxes[n] });
        for (int k = 0; k < s.GroundSpringStiffness.Length; k++)
            m.GroundSprings.Add(new Proto.SpringSensitivity { Spring = model.GroundSpringIds[k], Stiffness = s.GroundSpringStiffness[k], BreaksBifurcation = s.Breaks.GroundSprings[k] });
        for (int k = 0; k < s.LinkSpringStiffness.Length; k++)
            m.LinkSprings.Add(new Proto.SpringSensitivity { Spring = model.LinkSpringIds[k], Stiffness = s.LinkSpringStiffness[k], BreaksBifurcation = s.Breaks.LinkSprings[k] });
        return m;
    }

    public Proto.DisplacementTurn ToTurn(DisplacementTurn t)
    {
        var m = new Proto.DisplacementTurn { Sequence = t.Sequence, LoadFactor = t.LoadFactor, PointBefore = t.PointBefore, PointAfter = t.PointAfter, Branch = t.Branch };
        if (t.MonitoredIndex >= 0 && t.MonitoredIndex < monitored.Count)
        {
            var d = monitored[t.MonitoredIndex];
            m.Component = new Proto.MonitoredDisplacement { Node = d.Node, Direction = ModelMapper.ToDirection(d.Direction), Value = t.Value };
        }
        return m;
    }

    public Proto.PathSummary ToSummary(PathSummary s) => new()
    {
        Reason = ToReason(s.Reason), Branches = s.Branches,
        Message = s.Message, Completed = s.Completed, MaxLoadFactor = s.MaxLoadFactor, FinalLoadFactor = s.FinalLoadFactor,
        Points = s.Points, Steps = s.Steps, Iterations = s.Iterations, Cuts = s.Cuts, Factorizations = s.Factorizations,
        FactorizationTime = Duration.FromTimeSpan(s.FactorizationTime), WallTime = Duration.FromTimeSpan(s.WallTime),
        CriticalPoints = s.CriticalPoints.Count, Units = ModelMapper.ToUnits(model.Units),
        Refinements = s.Refinements,
    };

    public static Proto.MemberEvent ToMemberEvent(MemberEvent e) => new()
    {
        Kind = e.Kind switch
        {
            MemberEventKind.Yield => Proto.MemberEventKind.Yield,
            MemberEventKind.Buckle => Proto.MemberEventKind.Buckle,
            MemberEventKind.Slack => Proto.MemberEventKind.Slack,
            _ => Proto.MemberEventKind.Unspecified,
        },
        Bar = e.BarId, Point = e.Point, LoadFactor = e.LoadFactor, AxialForce = e.AxialForce, Utilization = e.Utilization,
        OnsetLoadFactor = e.OnsetLoadFactor, Branch = e.Branch,
    };

    /// <summary>One item of a knock-down sweep as its stream message.</summary>
    public static Proto.SweepImperfectionsResponse ToSweepResponse(Engine.Stability.SweepEvent e) => e switch
    {
        Engine.Stability.SweepReference r => new() { Reference = ToReference(r) },
        Engine.Stability.SweepResult x => new() { Result = ToResult(x) },
        _ => throw new NotSupportedException($"unknown sweep event {e.GetType().Name}"),
    };

    private static Proto.SweepReference ToReference(Engine.Stability.SweepReference r)
    {
        var m = new Proto.SweepReference { Kind = ToKind(r.Kind), Reason = ToReason(r.Reason), Message = r.Message };
        if (r.CriticalLoadFactor is { } l) m.CriticalLoadFactor = l;
        return m;
    }

    private static Proto.SweepResult ToResult(Engine.Stability.SweepResult s)
    {
        var m = new Proto.SweepResult { Index = s.Index, Amplitude = s.Amplitude, Kind = ToKind(s.Kind), Reason = ToReason(s.Reason), Message = s.Message, Points = s.Points };
        if (s.CriticalLoadFactor is { } l) m.CriticalLoadFactor = l;
        if (s.KnockDown is { } k) m.KnockDown = k;
        return m;
    }

    public static Proto.CriticalPointKind ToKind(CriticalPointKind? k) => k switch
    {
        CriticalPointKind.LimitPoint => Proto.CriticalPointKind.LimitPoint,
        CriticalPointKind.Bifurcation => Proto.CriticalPointKind.Bifurcation,
        CriticalPointKind.Unresolved => Proto.CriticalPointKind.Unresolved,
        _ => Proto.CriticalPointKind.Unspecified,
    };

    public static Proto.StopReason ToReason(StopReason r) => r switch
    {
        StopReason.TargetLoadFactorReached => Proto.StopReason.TargetLoadFactorReached,
        StopReason.TargetDisplacementReached => Proto.StopReason.TargetDisplacementReached,
        StopReason.PointLimitReached => Proto.StopReason.PointLimitReached,
        StopReason.CriticalPointReached => Proto.StopReason.CriticalPointReached,
        StopReason.Cancelled => Proto.StopReason.Cancelled,
        StopReason.WallTimeExceeded => Proto.StopReason.WallTimeExceeded,
        StopReason.Diverged => Proto.StopReason.Diverged,
        StopReason.InitialStateFailed => Proto.StopReason.InitialStateFailed,
        StopReason.BranchPointsReached => Proto.StopReason.BranchPointsReached,
        StopReason.BranchNotFound => Proto.StopReason.BranchNotFound,
        _ => Proto.StopReason.Unspecified,
    };

    /// <summary>
    /// Full state from per-node displacements and reactions (DofMap layout: rotations and reaction moments at rotating
    /// nodes), per-bar forces and strains and the beam elements' member-end actions; spring forces are derived here.
    /// </summary>
    public Proto.StructureState ToState(IReadOnlyList<double> u, IReadOnlyList<double> barForces, IReadOnlyList<double>? barStrains, IReadOnlyList<double> reactions,
        IReadOnlyList<double>? beamEndForces = null)
    {
        var s = new Proto.StructureState();
        var dofs = model.Dofs;
        for (int n = 0; n < model.NodeCount; n++)
        {
            int o = dofs.Offset[n];
            var node = new Proto.NodeState
            {
                Node = model.NodeIds[n],
                Ux = u[o], Uy = u[o + 1], Uz = u[o + 2],
                ReactionX = reactions[o], ReactionY = reactions[o + 1], ReactionZ = reactions[o + 2],
            };
            if (dofs.Rotates(n))
            {
                node.RotationX = u[o + 3]; node.RotationY = u[o + 4]; node.RotationZ = u[o + 5];
                node.ReactionMomentX = reactions[o + 3]; node.ReactionMomentY = reactions[o + 4]; node.ReactionMomentZ = reactions[o + 5];
            }
            s.Nodes.Add(node);
        }
        for (int b = 0; b < model.BarCount; b++)
            s.Bars.Add(new Proto.BarState { Bar = model.BarIds[b], AxialForce = barForces[b], Strain = barStrains?[b] ?? barForces[b] / (model.BarModulus[b] * model.BarArea[b]) });
        double[] full = u as double[] ?? u.ToArray();
        for (int i = 0; i < model.GroundSpringIds.Length; i++)
            s.Springs.Add(new Proto.SpringState { Spring = model.GroundSpringIds[i], Force = Engine.Elements.SpringForces.GroundForce(model, full, i) });
        for (int i = 0; i < model.LinkSpringIds.Length; i++)
            s.Springs.Add(new Proto.SpringState { Spring = model.LinkSpringIds[i], Force = Engine.Elements.SpringForces.LinkForce(model, full, i) });
        if (beamEndForces is { Count: > 0 })
            BeamResultMapper.AddElements(model, beamEndForces, s.BeamElements);
        return s;
    }

    public Proto.StructureState ToState(StructureState st) => ToState(st.Displacements, st.BarForces, st.BarStrains, st.Reactions, st.BeamEndForces);

    public Proto.BucklingMode ToMode(BucklingMode b)
    {
        var m = new Proto.BucklingMode { Number = b.Number, LoadFactor = b.LoadFactor, LoadAlignment = b.LoadAlignment };
        AddVectors(m.Shape, b.Shape);
        return m;
    }

    public static Proto.Finding ToFinding(ValidationFinding f) => new()
    {
        Severity = f.Severity == FindingSeverity.Error ? Proto.FindingSeverity.Error : Proto.FindingSeverity.Warning,
        Code = FieldPaths.CodeName(f.Code),
        Field = FieldPaths.ToRequestPath(f.FieldPath),
        ItemId = f.ItemId ?? "",
        Message = f.Message,
    };

    private void AddMonitored(Google.Protobuf.Collections.RepeatedField<Proto.MonitoredDisplacement> target, double[] values)
    {
        for (int i = 0; i < values.Length && i < monitored.Count; i++)
            target.Add(new Proto.MonitoredDisplacement { Node = monitored[i].Node, Direction = ModelMapper.ToDirection(monitored[i].Direction), Value = values[i] });
    }

    /// <summary>A mode vector (DofMap layout) per node; rotation components at rotating nodes.</summary>
    private void AddVectors(Google.Protobuf.Collections.RepeatedField<Proto.NodeVector> target, double[] v)
    {
        var dofs = model.Dofs;
        for (int n = 0; n < model.NodeCount && dofs.Offset[n + 1] <= v.Length; n++)
        {
            int o = dofs.Offset[n];
            var vector = new Proto.NodeVector { Node = model.NodeIds[n], X = v[o], Y = v[o + 1], Z = v[o + 2] };
            if (dofs.Rotates(n)) { vector.RotationX = v[o + 3]; vector.RotationY = v[o + 4]; vector.RotationZ = v[o + 5]; }
            target.Add(vector);
        }
    }
}
