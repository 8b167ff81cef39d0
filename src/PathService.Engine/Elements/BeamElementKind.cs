using PathService.Engine.Assembly;
using PathService.Engine.Model;

namespace PathService.Engine.Elements;

/// <summary>
/// The corotational beam-column as an element kind: 6 unknowns per end ordered [u1, θ1, u2, θ2] (θ spatial spins), the
/// symmetric 12×12 tangent stored as its 78 upper-triangle numbers, the 12 end forces and moments in global axes stored
/// as they are. The element itself (kinematics, internal force, tangent, local end forces) is the kernel in
/// <see cref="BeamKernel"/>; this class gathers each element's inputs from the model and the configuration (initial end
/// coordinates, section, releases, initial triad, end translations and end rotation matrices R = exp(ψ̂)). Path
/// independent (elastic, the configuration holds the total rotations), so nothing to commit.
/// An end fully released in rotation at a node without rotations gets the identity for R: its moments are zero and
/// its rotation rows map to no unknown.
/// </summary>
public sealed class BeamElementKind(StructuralModel m) : ElementKind
{
    private readonly BeamElements _b = m.Beams;

    public override string Name => "beam";
    public override int Count => _b.Count;
    public override int UnknownsPerEnd => 6;
    public override int Node(int element, int end) => end == 0 ? _b.Start[element] : _b.End[element];
    public override bool HoldsRotation(int element, int end) => end == 0 ? _b.StartHoldsRotation(element) : _b.EndHoldsRotation(element);
    public override int BlockSize => 78;
    public override int ForceSize => 12;

    private static readonly (int, int, int, bool)[] Tangent = BuildTangent();
    private static readonly (int, int, bool)[] Force = Enumerable.Range(0, 12).Select(l => (l, l, false)).ToArray();
    public override (int R, int C, int Entry, bool Negate)[] TangentLayout => Tangent;
    public override (int Local, int Entry, bool Negate)[] ForceLayout => Force;

    public override void Tangents(int from, int to, ReadOnlySpan<double> u, TangentParts parts, ReadOnlySpan<double> stress, Span<double> blocks)
    {
        if (parts != TangentParts.Consistent)
            throw new InvalidOperationException("beams give the consistent tangent only; linear analyses with beams are not available");
        Span<double> force = stackalloc double[12];
        Span<double> k = stackalloc double[144];
        Span<double> local = stackalloc double[12];
        for (int e = from; e < to; e++)
        {
            Evaluate(e, u, force, k, local);
            var block = blocks.Slice(78 * e, 78);
            int t = 0;
            for (int r = 0; r < 12; r++)
                for (int c = r; c < 12; c++) block[t++] = k[12 * r + c];
        }
    }

    public override void Forces(int from, int to, ReadOnlySpan<double> u, Span<double> f)
    {
        Span<double> local = stackalloc double[12];
        for (int e = from; e < to; e++) Evaluate(e, u, f.Slice(12 * e, 12), default, local);
    }

    /// <summary>Local end forces of element <paramref name="e"/>: N, Vy, Vz, T, My, Mz at the start, then at the end.</summary>
    public void EndForces(int e, ReadOnlySpan<double> u, Span<double> local)
    {
        Span<double> force = stackalloc double[12];
        Evaluate(e, u, force, default, local);
    }

    /// <summary>Gathers the inputs of element e and calls the kernel; <paramref name="tangent"/> may be empty (force only).</summary>
    private void Evaluate(int e, ReadOnlySpan<double> u, Span<double> force, Span<double> tangent, Span<double> local)
    {
        int i = _b.Start[e], j = _b.End[e];
        var map = m.Dofs;
        Span<double> x0 = stackalloc double[6];
        Span<double> d = stackalloc double[6];
        Span<double> r1 = stackalloc double[9];
        Span<double> r2 = stackalloc double[9];
        for (int q = 0; q < 3; q++)
        {
            x0[q] = m.Coordinates[3 * i + q]; x0[3 + q] = m.Coordinates[3 * j + q];
            d[q] = u[map.Offset[i] + q]; d[3 + q] = u[map.Offset[j] + q];
        }
        NodeRotation(map, u, i, r1);
        NodeRotation(map, u, j, r2);
        var section = new BeamSection(_b.ElasticModulus[e], _b.ShearModulus[e], _b.Area[e], _b.SecondMomentY[e], _b.SecondMomentZ[e], _b.TorsionConstant[e]);
        BeamKernel.Evaluate(x0, section, _b.StartReleases[e], _b.EndReleases[e], _b.Triad.AsSpan(9 * e, 9), d, r1, r2, force, tangent, local);
    }

    private static void NodeRotation(DofMap map, ReadOnlySpan<double> u, int node, Span<double> r)
    {
        if (!map.Rotates(node)) { r.Clear(); r[0] = r[4] = r[8] = 1; return; }
        int o = map.Offset[node] + 3;
        RotationVector.ToMatrix(u[o], u[o + 1], u[o + 2], r);
    }

    private static (int, int, int, bool)[] BuildTangent()
    {
        var list = new List<(int, int, int, bool)>(78);
        for (int r = 0; r < 12; r++)
            for (int c = r; c < 12; c++) list.Add((r, c, list.Count, false));
        return list.ToArray();
    }
}

/// <summary>Section and material of a beam element: moduli E, G; area A; second moments I_y, I_z; torsion constant J.</summary>
public readonly record struct BeamSection(double ElasticModulus, double ShearModulus, double Area, double SecondMomentY, double SecondMomentZ, double TorsionConstant);
