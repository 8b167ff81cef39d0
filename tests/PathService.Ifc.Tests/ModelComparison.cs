using PathService.Contracts.V1;

namespace PathService.Ifc.Tests;

/// <summary>Compares two models and load cases field by field; returns the largest relative difference of the numbers.</summary>
internal static class ModelComparison
{
    public static double AssertSame(StructureModel a, LoadCase la, StructureModel b, LoadCase lb)
    {
        double worst = 0;
        void Num(double x, double y, string what)
        {
            double err = Math.Abs(x - y) / Math.Max(1e-300, Math.Max(Math.Abs(x), Math.Abs(y)));
            if (x == y) err = 0;
            worst = Math.Max(worst, err);
            Assert.True(err < 1e-14, $"{what}: {x} against {y} (relative {err:E2})");
        }
        Assert.Equal(a.Units, b.Units);
        Assert.Equal(a.Nodes.Select(n => n.Id), b.Nodes.Select(n => n.Id));
        for (int i = 0; i < a.Nodes.Count; i++)
        {
            // Coordinates relative to the model's extent (a zero coordinate read back as 1e-17 is not an error).
            double extent = a.Nodes.Max(n => Math.Max(Math.Abs(n.X), Math.Max(Math.Abs(n.Y), Math.Abs(n.Z))));
            foreach (var (x, y, c) in new[] { (a.Nodes[i].X, b.Nodes[i].X, "x"), (a.Nodes[i].Y, b.Nodes[i].Y, "y"), (a.Nodes[i].Z, b.Nodes[i].Z, "z") })
            {
                double err = Math.Abs(x - y) / extent;
                worst = Math.Max(worst, err);
                Assert.True(err < 1e-14, $"node {a.Nodes[i].Id}.{c}: {x} against {y}");
            }
        }
        Assert.Equal(a.Bars.Select(x => (x.Id, x.StartNode, x.EndNode, x.Behavior == BarBehavior.TensionAndCompression ? BarBehavior.Unspecified : x.Behavior)),
            b.Bars.Select(x => (x.Id, x.StartNode, x.EndNode, x.Behavior)));
        for (int i = 0; i < a.Bars.Count; i++)
        {
            Num(a.Bars[i].ElasticModulus, b.Bars[i].ElasticModulus, $"bar {a.Bars[i].Id} E");
            Num(a.Bars[i].Area, b.Bars[i].Area, $"bar {a.Bars[i].Id} A");
        }
        Assert.Equal(a.Supports.Select(s => (s.Node, s.Direction)).Order(), b.Supports.Select(s => (s.Node, s.Direction)).Order());
        var sa = a.GroundSprings.OrderBy(s => s.Id).ToList();
        var sb = b.GroundSprings.OrderBy(s => s.Id).ToList();
        Assert.Equal(sa.Select(s => (s.Id, s.Node, s.Direction)), sb.Select(s => (s.Id, s.Node, s.Direction)));
        for (int i = 0; i < sa.Count; i++) Num(sa[i].Stiffness, sb[i].Stiffness, $"spring {sa[i].Id}");
        foreach (var (x, y, part) in new[] { (la.Reference, lb.Reference, "reference"), (la.Constant, lb.Constant, "constant") })
        {
            Assert.Equal(x.Select(l => l.Node), y.Select(l => l.Node));
            for (int i = 0; i < x.Count; i++)
            {
                double scale = Math.Max(Math.Abs(x[i].Fx), Math.Max(Math.Abs(x[i].Fy), Math.Abs(x[i].Fz)));
                foreach (var (p, q) in new[] { (x[i].Fx, y[i].Fx), (x[i].Fy, y[i].Fy), (x[i].Fz, y[i].Fz) })
                {
                    double err = Math.Abs(p - q) / scale;
                    worst = Math.Max(worst, err);
                    Assert.True(err < 1e-14, $"{part} load {i}: {p} against {q}");
                }
            }
        }
        return worst;
    }

    /// <summary>The same structure in N and mm (the contract's labels change; the numbers follow).</summary>
    public static (StructureModel, LoadCase) InNewtonsAndMillimetres(StructureModel m, LoadCase l)
    {
        var mm = m.Clone();
        var lm = l.Clone();
        mm.Units = new UnitLabels { Force = "N", Length = "mm" };
        foreach (var n in mm.Nodes) { n.X *= 1000; n.Y *= 1000; n.Z *= 1000; }
        foreach (var b in mm.Bars) { b.ElasticModulus *= 1e-3; b.Area *= 1e6; } // kN/m² → N/mm², m² → mm²
        foreach (var s in mm.GroundSprings) s.Stiffness *= 1; // kN/m = N/mm
        foreach (var f in lm.Reference.Concat(lm.Constant)) { f.Fx *= 1000; f.Fy *= 1000; f.Fz *= 1000; }
        return (mm, lm);
    }
}
