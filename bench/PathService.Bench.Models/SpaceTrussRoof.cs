// SpaceTrussRoof: generator of shallow double-layer space-truss roofs used as
// benchmark and test models.
//
// Layout (square-on-square offset grid): m x m top nodes on a square grid of
// spacing a, (m-1) x (m-1) bottom nodes under the centres of the top cells at
// depth h (span/20). Bars: top chords between neighbouring top nodes (x and y), bottom
// chords between neighbouring bottom nodes, and four diagonals from every
// bottom node to the corners of its top cell. The top surface has a shallow
// camber (a product of parabolas, zero at the perimeter, rise f at the centre)
// and the bottom layer follows it, so the roof can snap under downward load.
// Supports: every perimeter top node pinned (x, y, z). Loads: a uniform
// downward reference load on every free top node.
//
// Counts: nodes m^2 + (m-1)^2; bars 2m(m-1) + 2(m-1)(m-2) + 4(m-1)^2;
// free DOFs 3[(m-2)^2 + (m-1)^2] (about 84,000 at m = 120).

using PathService.Engine.Model;

namespace PathService.Bench.Models;

/// <summary>Parameters of a generated roof; defaults give a steel roof of 2 m bays.</summary>
public sealed record RoofParameters
{
    /// <summary>Top nodes per side (at least 3).</summary>
    public int M { get; init; } = 10;
    /// <summary>Grid spacing (m).</summary>
    public double Spacing { get; init; } = 2.0;
    /// <summary>Depth between the layers as a fraction of the span (span/20 by default, at least one bay's half).</summary>
    public double DepthRatio { get; init; } = 0.05;
    /// <summary>Rise of the camber at the centre as a fraction of the span.</summary>
    public double RiseRatio { get; init; } = 0.04;
    /// <summary>Young's modulus (kN/m²).</summary>
    public double Modulus { get; init; } = 2.0e8;
    public double ChordArea { get; init; } = 2.0e-3;
    public double DiagonalArea { get; init; } = 1.0e-3;
    /// <summary>Downward reference load per free top node (kN).</summary>
    public double NodalLoad { get; init; } = 10.0;
}

/// <summary>Builds shallow double-layer space-truss roofs as engine model definitions.</summary>
public static class SpaceTrussRoof
{
    public static string TopId(int i, int j) => $"t{i}_{j}";
    public static string BottomId(int i, int j) => $"b{i}_{j}";

    /// <summary>Id of the top node at the centre (or next to it for even m): a natural monitored point.</summary>
    public static string CentreNodeId(int m) => TopId(m / 2, m / 2);

    public static ModelDefinition Create(int m) => Create(new RoofParameters { M = m });

    public static ModelDefinition Create(RoofParameters p)
    {
        int m = p.M;
        if (m < 3) throw new ArgumentOutOfRangeException(nameof(p), "the roof needs at least 3 top nodes per side");
        double a = p.Spacing, span = (m - 1) * a, rise = p.RiseRatio * span, depth = Math.Max(0.5 * a, p.DepthRatio * span);

        // Camber z(x, y) = f (1 - ξ²)(1 - η²) with ξ, η in [-1, 1] across the span.
        double Camber(double x, double y)
        {
            double xi = 2 * x / span - 1, eta = 2 * y / span - 1;
            return rise * (1 - xi * xi) * (1 - eta * eta);
        }

        var nodes = new List<NodeDefinition>(m * m + (m - 1) * (m - 1));
        for (int i = 0; i < m; i++)
            for (int j = 0; j < m; j++)
            {
                double x = i * a, y = j * a;
                nodes.Add(new NodeDefinition(TopId(i, j), x, y, Camber(x, y)));
            }
        for (int i = 0; i < m - 1; i++)
            for (int j = 0; j < m - 1; j++)
            {
                double x = (i + 0.5) * a, y = (j + 0.5) * a;
                nodes.Add(new NodeDefinition(BottomId(i, j), x, y, Camber(x, y) - depth));
            }

        var bars = new List<BarDefinition>(2 * m * (m - 1) + 2 * (m - 1) * (m - 2) + 4 * (m - 1) * (m - 1));
        int id = 0;
        void Bar(string s, string e, double area) => bars.Add(new BarDefinition($"e{id++}", s, e, p.Modulus, area));
        for (int i = 0; i < m; i++)
            for (int j = 0; j < m; j++)
            {
                if (i + 1 < m) Bar(TopId(i, j), TopId(i + 1, j), p.ChordArea);
                if (j + 1 < m) Bar(TopId(i, j), TopId(i, j + 1), p.ChordArea);
            }
        for (int i = 0; i < m - 1; i++)
            for (int j = 0; j < m - 1; j++)
            {
                if (i + 1 < m - 1) Bar(BottomId(i, j), BottomId(i + 1, j), p.ChordArea);
                if (j + 1 < m - 1) Bar(BottomId(i, j), BottomId(i, j + 1), p.ChordArea);
                Bar(BottomId(i, j), TopId(i, j), p.DiagonalArea);
                Bar(BottomId(i, j), TopId(i + 1, j), p.DiagonalArea);
                Bar(BottomId(i, j), TopId(i, j + 1), p.DiagonalArea);
                Bar(BottomId(i, j), TopId(i + 1, j + 1), p.DiagonalArea);
            }

        var supports = new List<SupportDefinition>();
        var loads = new List<NodalLoad>();
        for (int i = 0; i < m; i++)
            for (int j = 0; j < m; j++)
            {
                bool perimeter = i == 0 || j == 0 || i == m - 1 || j == m - 1;
                if (perimeter)
                {
                    supports.Add(new SupportDefinition(TopId(i, j), Axis.X));
                    supports.Add(new SupportDefinition(TopId(i, j), Axis.Y));
                    supports.Add(new SupportDefinition(TopId(i, j), Axis.Z));
                }
                else loads.Add(new NodalLoad(TopId(i, j), 0, 0, -p.NodalLoad));
            }

        return new ModelDefinition
        {
            Name = $"double-layer roof m={m}",
            Nodes = nodes,
            Bars = bars,
            Supports = supports,
            Loads = LoadCaseDefinition.ReferenceOnly([.. loads]),
        };
    }
}
