// LatticeShell: generator of rigid-jointed single-layer lattice shells (beam models) used as benchmark models.
//
// Layout: (m+1) x (m+1) nodes on a square grid of spacing a, lifted onto a shallow shell z = f(1 - ξ²)(1 - η²)
// (ξ, η in [-1, 1] across the span, rise f = span/10 by default). Members: x and y edges between neighbouring nodes
// and one diagonal per cell, its direction alternating like a chequerboard so that the pattern is symmetric about
// both centre lines. Every member is a rigid-jointed beam of one tubular section, local y in the plane of the member
// and global z; optionally divided into n elements. Supports: every perimeter node held in x, y, z (rotations free).
// Loads: a uniform downward reference load on every free node.
//
// Counts: nodes (m+1)²; members 2m(m+1) + m²; with n elements per member, (n−1) generated nodes per member;
// unknowns 6 per node less the held perimeter translations (m = 57: 9,861 members, 20,184 unknowns before supports).

using PathService.Engine.Model;

namespace PathService.Bench.Models;

/// <summary>Parameters of a generated lattice shell; defaults give a steel shell of 2 m bays.</summary>
public sealed record ShellParameters
{
    /// <summary>Bays per side (at least 2).</summary>
    public int M { get; init; } = 10;
    /// <summary>Grid spacing in plan (m).</summary>
    public double Spacing { get; init; } = 2.0;
    /// <summary>Rise at the centre as a fraction of the span.</summary>
    public double RiseRatio { get; init; } = 0.1;
    /// <summary>Elements per member (1 = one element between joints).</summary>
    public int Subdivisions { get; init; } = 1;
    /// <summary>Young's and shear moduli (kN/m²), structural steel (common practice, no source).</summary>
    public double Modulus { get; init; } = 2.1e8;
    public double ShearModulus { get; init; } = 8.1e7;
    /// <summary>Section of a circular hollow tube, about 114 mm × 5 mm (A in m², I and J in m⁴; our own rounded values).</summary>
    public double Area { get; init; } = 1.7e-3;
    public double SecondMoment { get; init; } = 2.5e-6;
    /// <summary>Downward reference load per free node (kN).</summary>
    public double NodalLoad { get; init; } = 10.0;
}

/// <summary>Builds rigid-jointed single-layer lattice shells as engine model definitions.</summary>
public static class LatticeShell
{
    public static string NodeId(int i, int j) => $"n{i}_{j}";

    /// <summary>Id of the node at the centre (or next to it for odd m): a natural monitored point.</summary>
    public static string CentreNodeId(int m) => NodeId(m / 2, m / 2);

    public static ModelDefinition Create(int m, int subdivisions = 1) => Create(new ShellParameters { M = m, Subdivisions = subdivisions });

    public static ModelDefinition Create(ShellParameters p)
    {
        int m = p.M;
        if (m < 2) throw new ArgumentOutOfRangeException(nameof(p), "the shell needs at least 2 bays per side");
        double a = p.Spacing, span = m * a, rise = p.RiseRatio * span;
        double Shape(double x, double y)
        {
            double xi = 2 * x / span - 1, eta = 2 * y / span - 1;
            return rise * (1 - xi * xi) * (1 - eta * eta);
        }

        var nodes = new List<NodeDefinition>((m + 1) * (m + 1));
        for (int i = 0; i <= m; i++)
            for (int j = 0; j <= m; j++) nodes.Add(new NodeDefinition(NodeId(i, j), i * a, j * a, Shape(i * a, j * a)));

        var beams = new List<BeamDefinition>(2 * m * (m + 1) + m * m);
        int id = 0;
        void Member(string s, string e) => beams.Add(new BeamDefinition($"m{id++}", s, e, p.Modulus, p.ShearModulus, p.Area,
            p.SecondMoment, p.SecondMoment, 2 * p.SecondMoment, (0, 0, 1)) { Subdivisions = p.Subdivisions });
        for (int i = 0; i <= m; i++)
            for (int j = 0; j <= m; j++)
            {
                if (i < m) Member(NodeId(i, j), NodeId(i + 1, j));
                if (j < m) Member(NodeId(i, j), NodeId(i, j + 1));
                if (i < m && j < m)
                {
                    if ((i + j) % 2 == 0) Member(NodeId(i, j), NodeId(i + 1, j + 1));
                    else Member(NodeId(i + 1, j), NodeId(i, j + 1));
                }
            }

        var supports = new List<SupportDefinition>();
        var loads = new List<NodalLoad>();
        for (int i = 0; i <= m; i++)
            for (int j = 0; j <= m; j++)
            {
                if (i == 0 || j == 0 || i == m || j == m)
                {
                    supports.Add(new SupportDefinition(NodeId(i, j), Axis.X));
                    supports.Add(new SupportDefinition(NodeId(i, j), Axis.Y));
                    supports.Add(new SupportDefinition(NodeId(i, j), Axis.Z));
                }
                else loads.Add(new NodalLoad(NodeId(i, j), 0, 0, -p.NodalLoad));
            }

        return new ModelDefinition
        {
            Name = $"single-layer lattice shell m={m} n={p.Subdivisions}",
            Nodes = nodes,
            Beams = beams,
            Supports = supports,
            Loads = LoadCaseDefinition.ReferenceOnly([.. loads]),
        };
    }
}
