using PathService.Contracts.V1;

namespace PathService.Ifc.Tests;

/// <summary>Invented structures of our own, built as contract messages.</summary>
internal static class TestStructures
{
    /// <summary>
    /// A shallow trussed roof over a 8 m × 6 m bay: two ridge nodes 0.5 m above the eaves, each braced to two corners
    /// and to the two mid-eave nodes, joined by a ridge bar. Corners pinned; the mid-eave nodes held in x and z and on
    /// springs along y. Reference load 10 kN down at each ridge node (kN, m).
    /// </summary>
    public static (StructureModel Model, LoadCase Loads) TrussedRoof()
    {
        var m = new StructureModel { Name = "trussed roof", Units = new UnitLabels { Force = "kN", Length = "m" } };
        void N(string id, double x, double y, double z) => m.Nodes.Add(new Node { Id = id, X = x, Y = y, Z = z });
        N("C1", -4, -3, 0); N("C2", 4, -3, 0); N("C3", 4, 3, 0); N("C4", -4, 3, 0);
        N("M1", 0, -3, 0); N("M2", 0, 3, 0);
        N("R1", -1.5, 0, 0.5); N("R2", 1.5, 0, 0.5);
        const double E = 2.1e8;
        void B(string id, string a, string b, double area) =>
            m.Bars.Add(new Bar { Id = id, StartNode = a, EndNode = b, ElasticModulus = E, Area = area });
        B("r1c1", "R1", "C1", 0.002); B("r1c4", "R1", "C4", 0.002); B("r1m1", "R1", "M1", 0.0015); B("r1m2", "R1", "M2", 0.0015);
        B("r2c2", "R2", "C2", 0.002); B("r2c3", "R2", "C3", 0.002); B("r2m1", "R2", "M1", 0.0015); B("r2m2", "R2", "M2", 0.0015);
        B("ridge", "R1", "R2", 0.001);
        foreach (var c in new[] { "C1", "C2", "C3", "C4" })
            foreach (var d in new[] { Direction.X, Direction.Y, Direction.Z })
                m.Supports.Add(new Support { Node = c, Direction = d });
        foreach (var e in new[] { "M1", "M2" })
        {
            m.Supports.Add(new Support { Node = e, Direction = Direction.X });
            m.Supports.Add(new Support { Node = e, Direction = Direction.Z });
            m.GroundSprings.Add(new GroundSpring { Id = $"{e}-ky", Node = e, Direction = Direction.Y, Stiffness = 2500 });
        }
        var loads = new LoadCase();
        loads.Reference.Add(new NodalLoad { Node = "R1", Fz = -10 });
        loads.Reference.Add(new NodalLoad { Node = "R2", Fz = -10 });
        return (m, loads);
    }

    /// <summary>
    /// A small dome: eight pinned base nodes on a 6 m circle, eight crown-ring nodes on a 3.5 m circle 1.6 m up (turned
    /// by half a bay), an apex 2.2 m up; a tension-only tie ring at the base. Constant load 1 kN down at the ring nodes,
    /// reference 5 kN down at the apex and 0.3 kN sideways at one ring node (kN, m).
    /// </summary>
    public static (StructureModel Model, LoadCase Loads) SmallDome()
    {
        var m = new StructureModel { Name = "small dome", Units = new UnitLabels { Force = "kN", Length = "m" } };
        for (int i = 0; i < 8; i++)
        {
            double t = i * Math.PI / 4, u = t + Math.PI / 8;
            m.Nodes.Add(new Node { Id = $"b{i}", X = 6 * Math.Cos(t), Y = 6 * Math.Sin(t), Z = 0 });
            m.Nodes.Add(new Node { Id = $"r{i}", X = 3.5 * Math.Cos(u), Y = 3.5 * Math.Sin(u), Z = 1.6 });
        }
        m.Nodes.Add(new Node { Id = "apex", Z = 2.2 });
        for (int i = 0; i < 8; i++)
        {
            int j = (i + 1) % 8;
            m.Bars.Add(new Bar { Id = $"d{i}a", StartNode = $"b{i}", EndNode = $"r{i}", ElasticModulus = 2.05e8, Area = 9.5e-4 });
            m.Bars.Add(new Bar { Id = $"d{i}b", StartNode = $"b{j}", EndNode = $"r{i}", ElasticModulus = 2.05e8, Area = 9.5e-4 });
            m.Bars.Add(new Bar { Id = $"h{i}", StartNode = $"r{i}", EndNode = $"r{j}", ElasticModulus = 2.05e8, Area = 6.1e-4 });
            m.Bars.Add(new Bar { Id = $"s{i}", StartNode = $"r{i}", EndNode = "apex", ElasticModulus = 2.05e8, Area = 7.2e-4 });
            m.Bars.Add(new Bar { Id = $"t{i}", StartNode = $"b{i}", EndNode = $"b{j}", ElasticModulus = 1.6e8, Area = 3.1e-4, Behavior = BarBehavior.TensionOnly });
            m.Supports.Add(new Support { Node = $"b{i}", Direction = Direction.Z });
        }
        foreach (var d in new[] { Direction.X, Direction.Y }) m.Supports.Add(new Support { Node = "b0", Direction = d });
        m.Supports.Add(new Support { Node = "b2", Direction = Direction.X });
        m.GroundSprings.Add(new GroundSpring { Id = "b4-ky", Node = "b4", Direction = Direction.Y, Stiffness = 1200 });
        var loads = new LoadCase();
        for (int i = 0; i < 8; i++) loads.Constant.Add(new NodalLoad { Node = $"r{i}", Fz = -1 });
        loads.Reference.Add(new NodalLoad { Node = "apex", Fz = -5 });
        loads.Reference.Add(new NodalLoad { Node = "r3", Fx = 0.3, Fy = -0.1 });
        return (m, loads);
    }
}
