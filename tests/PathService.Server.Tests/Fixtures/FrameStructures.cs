using PathService.Contracts.V1;

namespace PathService.Server.Tests.Fixtures;

/// <summary>Invented rigid-jointed test frames, built as request messages.</summary>
public static class FrameStructures
{
    /// <summary>A steel tube section (114.3 × 5, kN and m): E, G, A, I, I, J = 2I.</summary>
    public static Beam Tube(string id, string start, string end) => new()
    {
        Id = id, StartNode = start, EndNode = end,
        ElasticModulus = 2.1e8, ShearModulus = 8.1e7, Area = 1.717e-3,
        SecondMomentY = 2.57e-6, SecondMomentZ = 2.57e-6, TorsionConstant = 5.14e-6,
        Orientation = new OrientationVector { Z = 1 },
    };

    /// <summary>
    /// A portal frame in the x-z plane: columns 3 m high at x = 0 and x = 4, a girder between their heads, both feet
    /// fixed (all six directions); a horizontal reference load of 10 kN at the left head.
    /// </summary>
    public static (StructureModel Model, LoadCase Loads) Portal()
    {
        var m = new StructureModel { Name = "portal frame", Units = new UnitLabels { Force = "kN", Length = "m" } };
        m.Nodes.Add(new Node { Id = "foot-L" });
        m.Nodes.Add(new Node { Id = "head-L", Z = 3 });
        m.Nodes.Add(new Node { Id = "head-R", X = 4, Z = 3 });
        m.Nodes.Add(new Node { Id = "foot-R", X = 4 });
        var left = Tube("col-L", "foot-L", "head-L"); left.Orientation = new OrientationVector { X = 1 };
        var right = Tube("col-R", "foot-R", "head-R"); right.Orientation = new OrientationVector { X = 1 };
        m.Beams.Add(left);
        m.Beams.Add(Tube("girder", "head-L", "head-R"));
        m.Beams.Add(right);
        foreach (var foot in new[] { "foot-L", "foot-R" })
            foreach (var d in new[] { Direction.X, Direction.Y, Direction.Z, Direction.RotationX, Direction.RotationY, Direction.RotationZ })
                m.Supports.Add(new Support { Node = foot, Direction = d });
        return (m, new LoadCase { Reference = { new NodalLoad { Node = "head-L", Fx = 10 } } });
    }
}
