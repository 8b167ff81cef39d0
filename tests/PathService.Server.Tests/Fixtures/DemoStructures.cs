using PathService.Contracts.V1;

namespace PathService.Server.Tests.Fixtures;

/// <summary>Invented test structures, built as request messages.</summary>
public static class DemoStructures
{
    public const double E = 2.0e8, Area = 1.2e-3;

    /// <summary>Symmetric shallow two-bar truss: supports at (±4, 0, 0), apex at (0, 0.35, 0), apex free only in y.</summary>
    public static StructureModel TwoBarTruss()
    {
        var m = new StructureModel { Name = "two-bar truss", Units = new UnitLabels { Force = "kN", Length = "m" } };
        m.Nodes.Add(new Node { Id = "left", X = -4 });
        m.Nodes.Add(new Node { Id = "apex", Y = 0.35 });
        m.Nodes.Add(new Node { Id = "right", X = 4 });
        m.Bars.Add(new Bar { Id = "bar-L", StartNode = "left", EndNode = "apex", ElasticModulus = E, Area = Area });
        m.Bars.Add(new Bar { Id = "bar-R", StartNode = "apex", EndNode = "right", ElasticModulus = E, Area = Area });
        foreach (var n in new[] { "left", "right" })
            foreach (var d in new[] { Direction.X, Direction.Y, Direction.Z })
                m.Supports.Add(new Support { Node = n, Direction = d });
        m.Supports.Add(new Support { Node = "apex", Direction = Direction.X });
        m.Supports.Add(new Support { Node = "apex", Direction = Direction.Z });
        return m;
    }

    public static LoadCase ApexLoad() => new() { Reference = { new NodalLoad { Node = "apex", Fy = -10 } } };

    public static DofRef ApexY => new() { Node = "apex", Direction = Direction.Y };

    /// <summary>Arc-length controls that trace the truss through both limit points to apex.y = -0.8.</summary>
    public static SolverControls ThroughBothLimitPoints() => new()
    {
        Method = ContinuationMethod.ArcLength,
        InitialLoadIncrement = 0.5,
        TargetDisplacementDof = ApexY,
        TargetDisplacement = -0.8,
        MaxPoints = 400,
        Monitored = { ApexY },
    };

    /// <summary>
    /// A single-layer triangulated lattice cap over a square plan of side 2a with rise f (a shallow paraboloid-like roof),
    /// cells × cells grid cells, all edge nodes pinned, a downward reference load of 1 on every inner node.
    /// Bars: 3·cells² + 2·cells.
    /// </summary>
    public static (StructureModel Model, LoadCase Loads, DofRef Crown) LatticeCap(int cells, double a = 15, double f = 1.5)
    {
        var m = new StructureModel { Name = $"lattice cap {cells}x{cells}", Units = new UnitLabels { Force = "kN", Length = "m" } };
        var loads = new LoadCase();
        string Id(int i, int j) => $"n{i}-{j}";
        for (int i = 0; i <= cells; i++)
            for (int j = 0; j <= cells; j++)
            {
                double x = -a + 2 * a * i / cells, y = -a + 2 * a * j / cells;
                double z = f * (1 - x * x / (a * a)) * (1 - y * y / (a * a));
                m.Nodes.Add(new Node { Id = Id(i, j), X = x, Y = y, Z = z });
                bool edge = i == 0 || j == 0 || i == cells || j == cells;
                if (edge)
                    foreach (var d in new[] { Direction.X, Direction.Y, Direction.Z })
                        m.Supports.Add(new Support { Node = Id(i, j), Direction = d });
                else
                    loads.Reference.Add(new NodalLoad { Node = Id(i, j), Fz = -1 });
            }
        int b = 0;
        void Bar(string s, string e) => m.Bars.Add(new Bar { Id = $"b{b++}", StartNode = s, EndNode = e, ElasticModulus = 2.1e8, Area = 2e-3 });
        for (int i = 0; i <= cells; i++)
            for (int j = 0; j <= cells; j++)
            {
                if (i < cells) Bar(Id(i, j), Id(i + 1, j));
                if (j < cells) Bar(Id(i, j), Id(i, j + 1));
                if (i < cells && j < cells) Bar(Id(i, j), Id(i + 1, j + 1));
            }
        return (m, loads, new DofRef { Node = Id(cells / 2, cells / 2), Direction = Direction.Z });
    }
}
