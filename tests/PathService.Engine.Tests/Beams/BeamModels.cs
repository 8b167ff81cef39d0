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
