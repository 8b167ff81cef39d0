using PathService.Engine.Model;

namespace PathService.Engine.Tests.Beams;

/// <summary>Small beam structures of our own for the element tests.</summary>
internal static class BeamModels
{
    public const double E = 2.1e8, G = 8.1e7; // kN/m², structural steel (common practice, no source)
    public const double A = 2.0e-3, Iy = 3.0e-6, Iz = 2.0e-6, J = 4.0e-6; // m², m⁴: a small hollow section of our own

    public static IEnumerable<SupportDefinition> Fixed(string node) =>
        [new(node, Axis.X), new(node, Axis.Y), new(node, Axis.Z), new(node, Axis.RotationX), new(node, Axis.RotationY), new(node, Axis.RotationZ)];

    public static BeamDefinition Beam(string id, string start, string end) => new(id, start, end, E, G, A, Iy, Iz, J, (0, 0, 1));

    /// <summary>
    /// A model's bars replaced by beams of the same modulus and area, released in every rotation at both ends (their small
    /// bending and torsion properties then carry nothing): the pin-jointed structure built from beam elements.
    /// </summary>
    public static ModelDefinition WithBarsAsPinnedBeams(ModelDefinition bars) => bars with
    {
        Bars = [],
        Beams = bars.Bars.Select(x => new BeamDefinition(x.Id, x.StartNode, x.EndNode, x.ElasticModulus, x.ElasticModulus / 2.6,
            x.Area, 1e-6, 1e-6, 1e-6, (0, 0, 1)) { StartReleases = BeamEndReleases.Pinned, EndReleases = BeamEndReleases.Pinned }).ToList(),
    };

    /// <summary>Arc length through both limit points of a two-bar truss of rise h, apex (y) monitored, to w = −2.3h.</summary>
    public static Continuation.SolverControls ThroughBothLimitPoints(double h) => new()
    {
        Method = Continuation.ContinuationMethod.ArcLength,
        InitialLoadIncrement = 0.5,
        ResidualTolerance = 1e-12,
        Monitored = [new DofReference("apex", Axis.Y)],
        TargetDisplacementDof = new DofReference("apex", Axis.Y),
        TargetDisplacement = -2.3 * h,
        MaxPoints = 400,
        CriticalPointTolerance = 1e-10,
    };

    /// <summary>A horizontal cantilever along x, length L, fixed at "root", a downward reference load at "tip".</summary>
    public static ModelDefinition Cantilever(double length, double pRef, int subdivisions = 1) => new()
    {
        Name = "cantilever",
        Nodes = [new("root", 0, 0, 0), new("tip", length, 0, 0)],
        Beams = [Beam("c", "root", "tip") with { Orientation = (0, 1, 0), Subdivisions = subdivisions }],
        Supports = [.. Fixed("root")],
        Loads = LoadCaseDefinition.ReferenceOnly(new NodalLoad("tip", 0, 0, -pRef)),
    };
}
