using PathService.Engine.Assembly;
using PathService.Engine.Model;

namespace PathService.Engine.Elements;

/// <summary>
/// The Total Lagrangian bar (<see cref="BarKinematics"/>) as an element kind: translations only, element matrix
/// [k, −k; −k, k] stored as the 6 distinct numbers of the symmetric 3×3 block k, force (A0 S/L0)[−x; x] stored as the
/// 3 numbers of (A0 S/L0)·x. Material history: the committed plastic strain of each bar (shared with the assembler).
/// </summary>
public sealed class BarElementKind(StructuralModel m, double[] plasticStrain) : ElementKind
{
    public override string Name => "bar";
    public override int Count => m.BarCount;
    public override int UnknownsPerEnd => 3;
    public override int Node(int element, int end) => end == 0 ? m.BarStart[element] : m.BarEnd[element];
    public override bool HoldsRotation(int element, int end) => false;
    public override int BlockSize => 6;
    public override int ForceSize => 3;

    private static readonly (int, int, int, bool)[] Tangent = BuildTangent();
    private static readonly (int, int, bool)[] Force = [(0, 0, true), (1, 1, true), (2, 2, true), (3, 0, false), (4, 1, false), (5, 2, false)];
    public override (int R, int C, int Entry, bool Negate)[] TangentLayout => Tangent;
    public override (int Local, int Entry, bool Negate)[] ForceLayout => Force;

    public override void Tangents(int from, int to, ReadOnlySpan<double> u, TangentParts parts, ReadOnlySpan<double> stress, Span<double> blocks)
    {
        for (int b = from; b < to; b++)
        {
            double L0 = m.BarLength[b], A = m.BarArea[b];
            var k6 = blocks.Slice(6 * b, 6);
            var s = BarKinematics.Evaluate(m, u, b, plasticStrain[b]);
            switch (parts)
            {
                case TangentParts.Consistent: BarKinematics.TangentBlock(s, s.TangentModulus, A, L0, true, k6); break;
                case TangentParts.MaterialOnly: BarKinematics.TangentBlock(s, s.TangentModulus, A, L0, false, k6); break;
                default:
                    double g = stress[b] * A / L0;
                    k6.Clear(); k6[0] = g; k6[3] = g; k6[5] = g;
                    break;
            }
        }
    }

    public override void Forces(int from, int to, ReadOnlySpan<double> u, Span<double> f)
    {
        for (int b = from; b < to; b++)
        {
            var s = BarKinematics.Evaluate(m, u, b, plasticStrain[b]);
            double c = m.BarArea[b] * s.Stress / m.BarLength[b];
            f[3 * b] = c * s.Dx; f[3 * b + 1] = c * s.Dy; f[3 * b + 2] = c * s.Dz;
        }
    }

    public override void Commit(ReadOnlySpan<double> u)
    {
        if (!m.HasMemberLaws) return;
        var next = new double[m.BarCount];
        for (int b = 0; b < m.BarCount; b++) next[b] = BarKinematics.Evaluate(m, u, b, plasticStrain[b]).PlasticStrain;
        next.CopyTo(plasticStrain, 0);
    }

    // Upper triangle of the 6×6 matrix, row-major; an entry couples the two ends (negated) when r and c lie at different ends.
    private static (int, int, int, bool)[] BuildTangent()
    {
        var list = new List<(int, int, int, bool)>(21);
        for (int r = 0; r < 6; r++)
            for (int c = r; c < 6; c++) list.Add((r, c, BarKinematics.BlockEntry(r % 3, c % 3), (r < 3) != (c < 3)));
        return list.ToArray();
    }
}
