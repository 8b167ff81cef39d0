// The gather-form, multi-threaded assembly against a plain sequential assembly written here:
// bit-identical internal forces and tangents, and no allocation per call.

using PathService.Bench.Models;
using PathService.Engine.Assembly;
using PathService.Engine.Elements;
using PathService.Engine.Model;

namespace PathService.Engine.Tests.Performance;

public class ParallelAssemblyTests
{
    private static (StructuralModel Model, StructureAssembler Assembler, double[] U) DisplacedRoof(int m)
    {
        var model = StructuralModel.Create(SpaceTrussRoof.Create(m));
        var asm = new StructureAssembler(model);
        var rng = new Random(3);
        var u = new double[3 * model.NodeCount];
        for (int e = 0; e < model.Dofs.FreeCount; e++) u[model.Dofs.FullOf[e]] = 0.05 * (rng.NextDouble() - 0.5);
        return (model, asm, u);
    }

    [Theory]
    [InlineData(12)] // below the threshold: one thread
    [InlineData(40)] // above it: all threads
    public void InternalForceAndTangent_AreBitIdenticalToSequentialAssembly(int m)
    {
        var (model, asm, u) = DisplacedRoof(m);
        var force = new double[3 * model.NodeCount];
        asm.InternalForce(u, force);
        var expected = new double[force.Length];
        for (int b = 0; b < model.BarCount; b++)
        {
            var s = BarKinematics.Evaluate(model.Coordinates, u, model.BarStart[b], model.BarEnd[b], model.BarLength[b], model.BarModulus[b], model.BarInitialStress[b]);
            BarKinematics.AddInternalForce(s, model.BarArea[b], model.BarLength[b], model.BarStart[b], model.BarEnd[b], expected);
        }
        Assert.Equal(expected, force);

        var values = new double[asm.Pattern.NonZeroCount];
        asm.Tangent(u, values);
        var reference = new double[values.Length];
        var eq = model.Dofs.EquationOf;
        Span<double> k6 = stackalloc double[6];
        for (int b = 0; b < model.BarCount; b++)
        {
            var s = BarKinematics.Evaluate(model.Coordinates, u, model.BarStart[b], model.BarEnd[b], model.BarLength[b], model.BarModulus[b], model.BarInitialStress[b]);
            BarKinematics.TangentBlock(s, model.BarModulus[b], model.BarArea[b], model.BarLength[b], true, k6);
            for (int r = 0; r < 6; r++)
                for (int c = r; c < 6; c++)
                {
                    int er = eq[3 * (r < 3 ? model.BarStart[b] : model.BarEnd[b]) + r % 3];
                    int ec = eq[3 * (c < 3 ? model.BarStart[b] : model.BarEnd[b]) + c % 3];
                    if (er < 0 || ec < 0) continue;
                    double v = k6[BarKinematics.BlockEntry(r % 3, c % 3)];
                    reference[asm.Pattern.FindSlot(er, ec)] += (r < 3) == (c < 3) ? v : -v;
                }
        }
        Assert.Equal(reference, values);
    }

    [Fact]
    public void Assembly_AllocatesNothingPerCall()
    {
        var (model, asm, u) = DisplacedRoof(40);
        var force = new double[3 * model.NodeCount];
        var values = new double[asm.Pattern.NonZeroCount];
        asm.InternalForce(u, force);
        asm.Tangent(u, values);
        long before = GC.GetAllocatedBytesForCurrentThread();
        for (int r = 0; r < 5; r++)
        {
            asm.InternalForce(u, force);
            asm.Tangent(u, values);
        }
        Assert.Equal(0, GC.GetAllocatedBytesForCurrentThread() - before);
    }
}
