// The gather-form assembly of beam elements (shared among threads above the threshold) against a plain sequential
// scatter of the same element numbers in element order: bit-identical internal forces and tangents.

using PathService.Bench.Models;
using PathService.Engine.Assembly;
using PathService.Engine.Model;

namespace PathService.Engine.Tests.Performance;

public class ParallelBeamAssemblyTests
{
    [Theory]
    [InlineData(4)]  // 56 beams: below the threshold, one thread
    [InlineData(12)] // 456 beams: above it, all threads
    public void Beam_forces_and_tangent_are_bit_identical_to_a_sequential_scatter(int m)
    {
        var model = StructuralModel.Create(LatticeShell.Create(m));
        var asm = new StructureAssembler(model);
        var rng = new Random(5);
        var u = new double[model.Dofs.FullCount];
        // Translations up to ±2.5 cm and rotation vectors up to ±0.05 rad at every free unknown.
        for (int e = 0; e < model.Dofs.FreeCount; e++) u[model.Dofs.FullOf[e]] = 0.05 * (rng.NextDouble() - 0.5);
        var kind = asm.Beams;
        var map = model.Dofs;

        var force = new double[map.FullCount];
        asm.InternalForce(u, force);
        var numbers = new double[kind.Count * kind.ForceSize];
        kind.Forces(0, kind.Count, u, numbers);
        var expected = new double[map.FullCount];
        for (int el = 0; el < kind.Count; el++)
            foreach (var (local, entry, negate) in kind.ForceLayout)
                if (kind.FullDof(map, el, local) is var d and >= 0)
                    expected[d] += negate ? -numbers[kind.ForceSize * el + entry] : numbers[kind.ForceSize * el + entry];
        Assert.All(numbers, x => Assert.True(double.IsFinite(x)));
        Assert.Equal(expected, force);

        var values = new double[asm.Pattern.NonZeroCount];
        asm.Tangent(u, values);
        var blocks = new double[kind.Count * kind.BlockSize];
        kind.Tangents(0, kind.Count, u, TangentParts.Consistent, default, blocks);
        var reference = new double[values.Length];
        for (int el = 0; el < kind.Count; el++)
            foreach (var (r, c, entry, negate) in kind.TangentLayout)
            {
                int fr = kind.FullDof(map, el, r), fc = kind.FullDof(map, el, c);
                if (fr < 0 || fc < 0 || map.EquationOf[fr] < 0 || map.EquationOf[fc] < 0) continue;
                double v = blocks[kind.BlockSize * el + entry];
                reference[asm.Pattern.FindSlot(map.EquationOf[fr], map.EquationOf[fc])] += negate ? -v : v;
            }
        Assert.Equal(reference, values);
    }
}
