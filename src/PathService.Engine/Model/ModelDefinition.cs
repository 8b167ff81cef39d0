namespace PathService.Engine.Model;

/// <summary>
/// Global direction of a node: the three translations (X, Y, Z = 0..2) and the three rotations about the global axes
/// (RotationX/Y/Z = 3..5, right-hand rule). A node has rotational unknowns only when a beam end holding some rotation
/// connects to it (see <see cref="DofMap"/>).
/// </summary>
public enum Axis { X = 0, Y = 1, Z = 2, RotationX = 3, RotationY = 4, RotationZ = 5 }

/// <summary>Which plane a member's bow imperfection lies in: bending towards local y or towards local z.</summary>
public enum BowPlane { LocalY = 0, LocalZ = 1 }

/// <summary>
/// End releases of a beam at one end: a released rotation is a hinge for that component (the end moment about that
/// local axis is zero). Torsion is the rotation about local x; BendingY and BendingZ the rotations about local y and z.
/// An end with all three released transmits forces only, like a bar's pin.
/// </summary>
public sealed record BeamEndReleases(bool Torsion = false, bool BendingY = false, bool BendingZ = false)
{
    /// <summary>A rigid end: every rotation held.</summary>
    public static BeamEndReleases Rigid { get; } = new();
    /// <summary>A pinned end: every rotation released.</summary>
    public static BeamEndReleases Pinned { get; } = new(true, true, true);
    /// <summary>Whether the end holds at least one rotation (then the node it connects to carries rotations).</summary>
    public bool HoldsRotation => !(Torsion && BendingY && BendingZ);
}

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

/// <summary>
/// A beam-column between two nodes (corotational formulation over a linear elastic beam): moduli E and G, section area
/// A, second moments I_y and I_z about the local y and z axes, torsion constant J, and an orientation vector that fixes
/// the local axes. Local x runs from the start node to the end node; local y lies in the plane of x and the orientation
/// vector, on the side the vector points to (y = normalised v − (v·x)x); local z = x × y. The orientation vector must not
/// be parallel to the member.
/// </summary>
public sealed record BeamDefinition(string Id, string StartNode, string EndNode, double ElasticModulus, double ShearModulus,
    double Area, double SecondMomentY, double SecondMomentZ, double TorsionConstant, (double X, double Y, double Z) Orientation)
{
    /// <summary>Releases at the start node (default: rigid).</summary>
    public BeamEndReleases StartReleases { get; init; } = BeamEndReleases.Rigid;
    /// <summary>Releases at the end node (default: rigid).</summary>
    public BeamEndReleases EndReleases { get; init; } = BeamEndReleases.Rigid;
    /// <summary>Number of elements the member is divided into (n ≥ 1); intermediate nodes get the ids "&lt;beam id&gt;#k", k = 1..n−1.</summary>
    public int Subdivisions { get; init; } = 1;
    /// <summary>
    /// Amplitude of a half-sine bow imperfection at mid-length (length unit, signed: positive towards +local y or +local z
    /// of <see cref="BowPlane"/>); 0 = straight. Applied to the intermediate nodes, so it needs <see cref="Subdivisions"/> ≥ 2.
    /// </summary>
    public double BowAmplitude { get; init; }
    /// <summary>The local plane the bow lies in.</summary>
    public BowPlane BowPlane { get; init; } = BowPlane.LocalY;
}

/// <summary>
/// A linear spring from a node to the ground acting on one global direction (an elastic bearing): force per length for a
/// translation, moment per radian for a rotation (RotationX/Y/Z).
/// </summary>
public sealed record GroundSpringDefinition(string Id, string Node, Axis Direction, double Stiffness);

/// <summary>A linear spring between two nodes acting on the difference of their displacements along one global direction.</summary>
public sealed record LinkSpringDefinition(string Id, string StartNode, string EndNode, Axis Direction, double Stiffness);

/// <summary>A restrained direction of a node, held at a prescribed displacement (zero for a plain support) throughout the analysis.</summary>
public sealed record SupportDefinition(string Node, Axis Direction, double PrescribedDisplacement = 0.0);

/// <summary>A nodal force vector in the model's force unit, with an optional nodal moment (force × length, about the global axes).</summary>
public sealed record NodalLoad(string Node, double Fx, double Fy, double Fz)
{
    /// <summary>Moment about global x; needs a node with rotational unknowns.</summary>
    public double Mx { get; init; }
    /// <summary>Moment about global y; needs a node with rotational unknowns.</summary>
    public double My { get; init; }
    /// <summary>Moment about global z; needs a node with rotational unknowns.</summary>
    public double Mz { get; init; }
    /// <summary>Whether any moment component is non-zero.</summary>
    public bool HasMoment => Mx != 0 || My != 0 || Mz != 0;
}

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
    public IReadOnlyList<BeamDefinition> Beams { get; init; } = [];
    public IReadOnlyList<GroundSpringDefinition> GroundSprings { get; init; } = [];
    public IReadOnlyList<LinkSpringDefinition> LinkSprings { get; init; } = [];
    public IReadOnlyList<SupportDefinition> Supports { get; init; } = [];
    public LoadCaseDefinition Loads { get; init; } = new([], []);
    public IReadOnlyList<LoadSet> LoadSets { get; init; } = [];
    public LoadCombination? Combination { get; init; }
    /// <summary>Gravitational acceleration vector for self-weight (length/s²); default 9.81 downward along z.</summary>
    public (double X, double Y, double Z) Gravity { get; init; } = (0, 0, -9.81);
}
