namespace PathService.Engine.Model;

/// <summary>Global translational direction of a node.</summary>
public enum Axis { X = 0, Y = 1, Z = 2 }

/// <summary>A joint of the structure at its initial (stress-free unless stated) position.</summary>
public sealed record NodeDefinition(string Id, double X, double Y, double Z);

/// <summary>
/// A pin-ended bar between two nodes: Young's modulus, undeformed cross-section area A0 and an optional
/// initial second Piola-Kirchhoff stress (prestress, positive in tension) present before any load.
/// </summary>
public sealed record BarDefinition(string Id, string StartNode, string EndNode, double ElasticModulus, double Area, double InitialStress = 0.0)
{
    /// <summary>Mass density (mass per unit volume in units consistent with force and length: t/m³ with kN and m); 0 = weightless.</summary>
    public double Density { get; init; }
    /// <summary>Tension-only (cable), compression-only, or both (default).</summary>
    public Elements.BarBehavior Behavior { get; init; }
    /// <summary>Yield stress for elastic-perfectly-plastic behavior, same in tension and compression; 0 = elastic throughout.</summary>
    public double YieldStress { get; init; }
    /// <summary>Second moment of area of the section for the Euler check π²EI/(KL)²; 0 = no buckling check.</summary>
    public double SecondMoment { get; init; }
    /// <summary>Effective-length factor K of the Euler check (1 for pin-ended members).</summary>
    public double EffectiveLengthFactor { get; init; } = 1.0;
}

/// <summary>A linear spring from a node to the ground acting on one global direction (an elastic bearing).</summary>
public sealed record GroundSpringDefinition(string Id, string Node, Axis Direction, double Stiffness);

/// <summary>A linear spring between two nodes acting on the difference of their displacements along one global direction.</summary>
public sealed record LinkSpringDefinition(string Id, string StartNode, string EndNode, Axis Direction, double Stiffness);

/// <summary>A restrained direction of a node, held at a prescribed displacement (zero for a plain support) throughout the analysis.</summary>
public sealed record SupportDefinition(string Node, Axis Direction, double PrescribedDisplacement = 0.0);

/// <summary>A nodal force vector in the model's force unit.</summary>
public sealed record NodalLoad(string Node, double Fx, double Fy, double Fz);

/// <summary>A displacement component watched along the path (and the control variable of displacement control).</summary>
public sealed record DofReference(string Node, Axis Direction)
{
    public override string ToString() => $"{Node}.{Direction.ToString().ToLowerInvariant()}";
}

/// <summary>
/// The load case: F(λ) = F_const + λ·F_ref. The constant part is applied in full before tracing starts;
/// the reference part is scaled by the load factor λ.
/// </summary>
public sealed record LoadCaseDefinition(IReadOnlyList<NodalLoad> Constant, IReadOnlyList<NodalLoad> Reference)
{
    public static LoadCaseDefinition ReferenceOnly(params NodalLoad[] reference) => new([], reference);
}

/// <summary>A load set: a named set of nodal loads. With <see cref="SelfWeight"/> it also carries the bars' weight.</summary>
public sealed record LoadSet(string Name, IReadOnlyList<NodalLoad> Loads, bool SelfWeight = false);

/// <summary>A load set taken with a factor into a combination.</summary>
public sealed record LoadSetFactor(string LoadSet, double Factor);

/// <summary>
/// A factored combination of load sets: the constant part is applied in full, the reference part is scaled by λ.
/// Example (EN 1990, eq. 6.10): constant 1.35·permanent, reference 1.5·snow; or (ASCE 7, 2.3.1) 1.2·dead constant and
/// 1.6·live as reference. The combination is added to any loads given directly in the load case.
/// </summary>
public sealed record LoadCombination(string Name, IReadOnlyList<LoadSetFactor> Constant, IReadOnlyList<LoadSetFactor> Reference);

/// <summary>Labels of the consistent unit system the numbers are given in; echoed in every report.</summary>
public sealed record UnitLabels(string Force = "kN", string Length = "m");

/// <summary>Everything the caller declares about a structure, before validation. Build an immutable <see cref="StructuralModel"/> from it.</summary>
public sealed record ModelDefinition
{
    public string Name { get; init; } = "model";
    public UnitLabels Units { get; init; } = new();
    public IReadOnlyList<NodeDefinition> Nodes { get; init; } = [];
    public IReadOnlyList<BarDefinition> Bars { get; init; } = [];
    public IReadOnlyList<GroundSpringDefinition> GroundSprings { get; init; } = [];
    public IReadOnlyList<LinkSpringDefinition> LinkSprings { get; init; } = [];
    public IReadOnlyList<SupportDefinition> Supports { get; init; } = [];
    public LoadCaseDefinition Loads { get; init; } = new([], []);
    public IReadOnlyList<LoadSet> LoadSets { get; init; } = [];
    public LoadCombination? Combination { get; init; }
    /// <summary>Gravitational acceleration vector for self-weight (length/s²); default 9.81 downward along z.</summary>
    public (double X, double Y, double Z) Gravity { get; init; } = (0, 0, -9.81);
}
