using PathService.Engine.Model;

namespace PathService.Engine.Tests;

/// <summary>Small structures used across the tests; dimensions are our own.</summary>
internal static class TestModels
{
    public static IEnumerable<SupportDefinition> Pin(string node) =>
        [new(node, Axis.X), new(node, Axis.Y), new(node, Axis.Z)];

    /// <summary>
    /// Symmetric shallow two-bar truss in the x-y plane: supports at (±b, 0, 0), apex at (0, h, 0), downward reference
    /// load P_ref at the apex; the apex moves only vertically (x and z restrained), as the closed form assumes.
    /// </summary>
    public static ModelDefinition TwoBarTruss(double b, double h, double ea, double pRef, double apexSpring = 0)
    {
        const double E = 2.0e8; // kN/m², a structural steel modulus
        return new ModelDefinition
        {
            Name = "two-bar truss",
            Nodes = [new("left", -b, 0, 0), new("apex", 0, h, 0), new("right", b, 0, 0)],
            Bars = [new("bar-L", "left", "apex", E, ea / E), new("bar-R", "apex", "right", E, ea / E)],
            GroundSprings = apexSpring > 0 ? [new GroundSpringDefinition("apex-spring", "apex", Axis.Y, apexSpring)] : [],
            Supports = [.. Pin("left"), .. Pin("right"), new("apex", Axis.X), new("apex", Axis.Z)],
            Loads = LoadCaseDefinition.ReferenceOnly(new NodalLoad("apex", 0, -pRef, 0)),
        };
    }

    /// <summary>
    /// A vertical bar pinned at its base, its top held laterally by a spring k (x) and loaded axially downward.
    /// Out-of-plane (z) motion of the top is restrained.
    /// </summary>
    public static ModelDefinition SpringHeldPost(double length, double ea, double k, double pRef)
    {
        const double E = 2.0e8;
        return new ModelDefinition
        {
            Name = "spring-held post",
            Nodes = [new("base", 0, 0, 0), new("top", 0, length, 0)],
            Bars = [new("post", "base", "top", E, ea / E)],
            GroundSprings = [new GroundSpringDefinition("lateral", "top", Axis.X, k)],
            Supports = [.. Pin("base"), new("top", Axis.Z)],
            Loads = LoadCaseDefinition.ReferenceOnly(new NodalLoad("top", 0, -pRef, 0)),
        };
    }
}
