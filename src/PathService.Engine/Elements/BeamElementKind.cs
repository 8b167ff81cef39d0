using PathService.Engine.Assembly;
using PathService.Engine.Model;

namespace PathService.Engine.Elements;

/// <summary>
/// The corotational beam-column as an element kind: 6 unknowns per end ordered [u1, θ1, u2, θ2] (θ spatial spins), the
/// symmetric 12×12 tangent stored as its 78 upper-triangle numbers, the 12 end forces and moments in global axes stored
/// as they are. The element itself (kinematics, internal force, tangent, member-end actions) is the kernel
/// <see cref="CorotationalBeam"/>; this class prepares each element's reference data once (initial chord and length,
/// initial triad from the member's orientation vector, condensed local stiffness with the releases) and gathers its end
/// translations and rotation matrices R = exp(ψ̂) from the configuration. Path independent (elastic, the configuration
/// holds the total rotations), so nothing to commit.
/// An end fully released in rotation at a node without rotations gets the identity for R: its moments are zero and its
/// rotation rows map to no unknown. Where the kernel has no element frame (the two ends twisted a quarter turn relative
/// to each other) the element's numbers are NaN, which the corrector turns into a cut step.
/// </summary>
public sealed class BeamElementKind : ElementKind
{
    private readonly StructuralModel m;
    private readonly BeamElements _b;
    private readonly double[] _reference;

    public BeamElementKind(StructuralModel model)
    {
        m = model;
        _b = model.Beams;
        _reference = new double[CorotationalBeam.ReferenceSize * _b.Count];
        Span<double> x1 = stackalloc double[3], x2 = stackalloc double[3], v = stackalloc double[3];
        for (int e = 0; e < _b.Count; e++)
        {
            for (int q = 0; q < 3; q++) { x1[q] = m.Coordinates[3 * _b.Start[e] + q]; x2[q] = m.Coordinates[3 * _b.End[e] + q]; }
            var o = model.Definition.Beams[_b.Member[e]].Orientation;
            v[0] = o.X; v[1] = o.Y; v[2] = o.Z;
            int r1 = _b.StartReleases[e], r2 = _b.EndReleases[e];
            var releases = new BeamReleases((r1 & BeamElements.ReleaseTorsion) != 0, (r1 & BeamElements.ReleaseBendingY) != 0, (r1 & BeamElements.ReleaseBendingZ) != 0,
                (r2 & BeamElements.ReleaseTorsion) != 0, (r2 & BeamElements.ReleaseBendingY) != 0, (r2 & BeamElements.ReleaseBendingZ) != 0);
            var section = new BeamSection(_b.ElasticModulus[e], _b.ShearModulus[e], _b.Area[e], _b.SecondMomentY[e], _b.SecondMomentZ[e], _b.TorsionConstant[e]);
            // Validation has rejected zero lengths and orientations along the member; a bowed element's chord turns by
            // less than the bow's slope, far from parallel.
            if (!CorotationalBeam.TryPrepare(x1, x2, v, section, releases, _reference.AsSpan(CorotationalBeam.ReferenceSize * e, CorotationalBeam.ReferenceSize)))
                throw new InvalidOperationException($"beam element '{_b.Ids[e]}' has no local axes (validated models cannot reach this)");
        }
    }

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
        Span<double> k = stackalloc double[144];
        for (int e = from; e < to; e++)
        {
            var block = blocks.Slice(78 * e, 78);
            if (!Evaluate(e, u, default, k, default)) { block.Fill(double.NaN); continue; }
            int t = 0;
            for (int r = 0; r < 12; r++)
                for (int c = r; c < 12; c++) block[t++] = k[12 * r + c];
        }
    }

    public override void Forces(int from, int to, ReadOnlySpan<double> u, Span<double> f)
    {
        for (int e = from; e < to; e++)
            if (!Evaluate(e, u, f.Slice(12 * e, 12), default, default)) f.Slice(12 * e, 12).Fill(double.NaN);
    }

    /// <summary>
    /// Member-end actions of element <paramref name="e"/> in its current local axes: force and moment on the member at the
    /// start (F1x, F1y, F1z, M1x, M1y, M1z), then at the end (F2x = N, tension positive; Mx torsion, My and Mz bending).
    /// NaN where the element has no frame.
    /// </summary>
    public void EndForces(int e, ReadOnlySpan<double> u, Span<double> local)
    {
        if (!Evaluate(e, u, default, default, local)) local.Fill(double.NaN);
    }

    /// <summary>Gathers element e's end translations and rotation matrices and calls the kernel.</summary>
    private bool Evaluate(int e, ReadOnlySpan<double> u, Span<double> force, Span<double> tangent, Span<double> endForces)
    {
        int i = _b.Start[e], j = _b.End[e];
        var map = m.Dofs;
        Span<double> r1 = stackalloc double[9];
        Span<double> r2 = stackalloc double[9];
        NodeRotation(map, u, i, r1);
        NodeRotation(map, u, j, r2);
        return CorotationalBeam.Evaluate(_reference.AsSpan(CorotationalBeam.ReferenceSize * e, CorotationalBeam.ReferenceSize),
            u.Slice(map.Offset[i], 3), r1, u.Slice(map.Offset[j], 3), r2, force, tangent, endForces);
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
