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

    /// <summary>
    /// The spring-held post of <see cref="SpringHeldPost"/> in three dimensions: its top held by equal springs k along x
    /// and z, so that the two sway directions are equivalent and the bifurcation is double.
    /// </summary>
    public static ModelDefinition SpringHeldPost3D(double length, double ea, double k, double pRef)
    {
        const double E = 2.0e8;
        return new ModelDefinition
        {
            Name = "post held by two springs",
            Nodes = [new("base", 0, 0, 0), new("top", 0, length, 0)],
            Bars = [new("post", "base", "top", E, ea / E)],
            GroundSprings = [new GroundSpringDefinition("sway-x", "top", Axis.X, k), new GroundSpringDefinition("sway-z", "top", Axis.Z, k)],
            Supports = [.. Pin("base")],
            Loads = LoadCaseDefinition.ReferenceOnly(new NodalLoad("top", 0, -pRef, 0)),
        };
    }

    /// <summary>
    /// Two independent parts in one model: the shallow two-bar truss of <see cref="TwoBarTruss"/> (apex loaded by
    /// P_ref) and, beside it, the post of <see cref="SpringHeldPost3D"/> loaded axially by <paramref name="postLoad"/>
    /// per unit λ. The tangent is block-diagonal, so the two parts' critical points add up in the count.
    /// </summary>
    public static ModelDefinition TrussBesidePost(double b, double h, double eaTruss, double pRef, double length, double eaPost, double k, double postLoad)
    {
        const double E = 2.0e8;
        return new ModelDefinition
        {
            Name = "truss beside a post",
            Nodes = [new("left", -b, 0, 0), new("apex", 0, h, 0), new("right", b, 0, 0), new("base", 10, 0, 0), new("top", 10, length, 0)],
            Bars = [new("bar-L", "left", "apex", E, eaTruss / E), new("bar-R", "apex", "right", E, eaTruss / E), new("post", "base", "top", E, eaPost / E)],
            GroundSprings = [new GroundSpringDefinition("sway-x", "top", Axis.X, k), new GroundSpringDefinition("sway-z", "top", Axis.Z, k)],
            Supports = [.. Pin("left"), .. Pin("right"), new("apex", Axis.X), new("apex", Axis.Z), .. Pin("base")],
            Loads = LoadCaseDefinition.ReferenceOnly(new NodalLoad("apex", 0, -pRef, 0), new NodalLoad("top", 0, -postLoad, 0)),
        };
    }

    /// <summary>
    /// The two-bar truss loaded through a soft vertical link spring k_s: the load point "cap" sits above the apex and
    /// is joined to it by a link spring along y. The load-point deflection v = w + P/k_s turns back (snap-back) where the
    /// truss's tangent stiffness dP/dw equals −k_s.
    /// </summary>
    public static ModelDefinition TwoBarTrussThroughSpring(double b, double h, double ea, double pRef, double linkStiffness)
    {
        const double E = 2.0e8;
        return new ModelDefinition
        {
            Name = "two-bar truss loaded through a spring",
            Nodes = [new("left", -b, 0, 0), new("apex", 0, h, 0), new("right", b, 0, 0), new("cap", 0, h + 1.0, 0)],
            Bars = [new("bar-L", "left", "apex", E, ea / E), new("bar-R", "apex", "right", E, ea / E)],
            LinkSprings = [new LinkSpringDefinition("feed", "apex", "cap", Axis.Y, linkStiffness)],
            Supports = [.. Pin("left"), .. Pin("right"), new("apex", Axis.X), new("apex", Axis.Z), new("cap", Axis.X), new("cap", Axis.Z)],
            Loads = LoadCaseDefinition.ReferenceOnly(new NodalLoad("cap", 0, -pRef, 0)),
        };
    }

    /// <summary>
    /// A flat roof deck carried by <paramref name="columns"/> pin-ended columns of length L (our own scenario): every
    /// column top carries the roof load P and is tied to one deck node by a link spring along x (the deck diaphragm,
    /// stiffness k_tie); the deck is braced to the ground along x by a spring of N·k. Sway of all columns with the deck
    /// is the global bifurcation, at P_cr = k_eff·L√(1 − 2k_eff·L/EA) per column, k_eff = k·k_tie/(k + k_tie) (the
    /// spring-held post held by its tie in series with its share of the brace), with a mode orthogonal to the load. On the roof sits a shallow two-bar skylight truss carrying a small
    /// load p at its apex: its snap-through is a local limit point whose mode, the apex alone, has a load alignment
    /// p / √(N P² + p²).
    /// </summary>
    public static ModelDefinition ColumnRoofWithSkylight(int columns, double length, double eaColumn, double k, double tie, double load,
        double skylightB, double skylightH, double eaSkylight, double skylightLoad)
    {
        const double E = 2.0e8;
        var nodes = new List<NodeDefinition>(2 * columns + 4);
        var bars = new List<BarDefinition>(columns + 2);
        var links = new List<LinkSpringDefinition>(columns);
        var supports = new List<SupportDefinition>(4 * columns + 8);
        var loads = new List<NodalLoad>(columns + 1);
        nodes.Add(new("deck", -1, length, 0));
        supports.Add(new("deck", Axis.Y));
        supports.Add(new("deck", Axis.Z));
        for (int i = 0; i < columns; i++)
        {
            string b = $"c{i}b", t = $"c{i}t";
            nodes.Add(new(b, i, 0, 0));
            nodes.Add(new(t, i, length, 0));
            bars.Add(new($"c{i}", b, t, E, eaColumn / E));
            links.Add(new($"tie{i}", "deck", t, Axis.X, tie));
            supports.AddRange(Pin(b));
            supports.Add(new(t, Axis.Z));
            loads.Add(new(t, 0, -load, 0));
        }
        double x0 = columns / 2.0, y0 = length;
        nodes.Add(new("sky-l", x0 - skylightB, y0, 1));
        nodes.Add(new("sky-apex", x0, y0 + skylightH, 1));
        nodes.Add(new("sky-r", x0 + skylightB, y0, 1));
        bars.Add(new("sky-1", "sky-l", "sky-apex", E, eaSkylight / E));
        bars.Add(new("sky-2", "sky-apex", "sky-r", E, eaSkylight / E));
        supports.AddRange([.. Pin("sky-l"), .. Pin("sky-r"), new("sky-apex", Axis.X), new("sky-apex", Axis.Z)]);
        loads.Add(new("sky-apex", 0, -skylightLoad, 0));
        return new ModelDefinition
        {
            Name = $"roof on {columns} columns with a skylight",
            Nodes = nodes, Bars = bars, LinkSprings = links, Supports = supports,
            GroundSprings = [new GroundSpringDefinition("deck-brace", "deck", Axis.X, columns * k)],
            Loads = LoadCaseDefinition.ReferenceOnly([.. loads]),
        };
    }

    /// <summary>
    /// A row of independent spring-held posts (<see cref="SpringHeldPost"/>, each restrained out of plane), post i held
    /// by its own spring k_i and loaded by P_ref: the tangent is block-diagonal, so each post bifurcates alone at its
    /// own closed-form load, and posts with close springs give distinct crossings close together.
    /// </summary>
    public static ModelDefinition PostRow(double length, double ea, double[] springs, double pRef)
    {
        const double E = 2.0e8;
        var nodes = new List<NodeDefinition>();
        var bars = new List<BarDefinition>();
        var springsDef = new List<GroundSpringDefinition>();
        var supports = new List<SupportDefinition>();
        var loads = new List<NodalLoad>();
        for (int i = 0; i < springs.Length; i++)
        {
            string b = $"p{i}b", t = $"p{i}t";
            nodes.Add(new(b, 2.0 * i, 0, 0));
            nodes.Add(new(t, 2.0 * i, length, 0));
            bars.Add(new($"p{i}", b, t, E, ea / E));
            springsDef.Add(new GroundSpringDefinition($"k{i}", t, Axis.X, springs[i]));
            supports.AddRange(Pin(b));
            supports.Add(new(t, Axis.Z));
            loads.Add(new(t, 0, -pRef, 0));
        }
        return new ModelDefinition
        {
            Name = $"row of {springs.Length} posts",
            Nodes = nodes, Bars = bars, GroundSprings = springsDef, Supports = supports,
            Loads = LoadCaseDefinition.ReferenceOnly([.. loads]),
        };
    }
}
