using PathService.Bench.Models;
using PathService.Engine.Assembly;
using PathService.Engine.Model;
using PathService.Engine.Sparse;

namespace PathService.Engine.Tests.Sparse;

/// <summary>
/// Real tangents of the m = 20 bench roof, K₀ − σK_G for σ = 0, 2e5, 8e5 (the last indefinite), factorised with the
/// supernodal LDLᵀ on a given ordering: the inertia must equal the reference up-looking factor's (Sylvester: a property
/// of the matrix, whatever the ordering), and the solves must satisfy K x = b.
/// </summary>
internal static class RoofTangentSolves
{
    /// <summary>The largest relative residual ‖Kx − b‖/‖b‖ over the shifts, and the last shift's negative pivots.</summary>
    public static (double WorstResidual, int LastNegativePivots) Check(OrderingMethod ordering)
    {
        var model = StructuralModel.Create(SpaceTrussRoof.Create(20));
        var asm = new StructureAssembler(model);
        var u = new double[3 * model.NodeCount];
        var k0 = new double[asm.Pattern.NonZeroCount];
        asm.Tangent(u, k0);
        var kg = new double[asm.Pattern.NonZeroCount];
        asm.Tangent(u, kg, TangentParts.GeometricOnly, Enumerable.Repeat(1.0, model.BarCount).ToArray());
        var factor = new SupernodalLdlFactorization(OrderingChoice.Analyze(model, asm.Pattern, ordering));
        var reference = new LdlFactorization(LdlSymbolic.Analyze(asm.Pattern));
        var b = new double[asm.Pattern.Size];
        for (int i = 0; i < b.Length; i++) b[i] = Math.Sin(0.37 * i) + 0.1;
        double worst = 0;
        foreach (double sigma in new[] { 0.0, 2e5, 8e5 })
        {
            var values = k0.Select((v, i) => v - sigma * kg[i]).ToArray();
            if (reference.Factorize(values) == LdlStatus.ZeroPivot) continue;
            Assert.NotEqual(LdlStatus.ZeroPivot, factor.Factorize(values));
            Assert.Equal(reference.NegativePivotCount, factor.NegativePivotCount);
            var x = (double[])b.Clone();
            factor.Solve(x);
            var kx = new double[b.Length];
            asm.Multiply(values, x, kx);
            double r = 0, bb = 0;
            for (int i = 0; i < b.Length; i++) { r += (kx[i] - b[i]) * (kx[i] - b[i]); bb += b[i] * b[i]; }
            worst = Math.Max(worst, Math.Sqrt(r / bb));
        }
        return (worst, factor.NegativePivotCount);
    }
}
