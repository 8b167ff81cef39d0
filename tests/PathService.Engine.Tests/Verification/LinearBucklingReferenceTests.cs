using MathNet.Numerics.LinearAlgebra;
using PathService.Engine.Analyses;
using PathService.Engine.Assembly;
using PathService.Engine.Model;
using PathService.Engine.Tests.Fixtures;

namespace PathService.Engine.Tests.Verification;

/// <summary>
/// Linearised buckling by subspace iteration against a dense generalised eigensolution with MathNet.Numerics:
/// K0 φ = μ(−K_σ)φ, solved as the eigenvalues θ = 1/μ of K0⁻¹(−K_σ), on a dome whose reference load leaves many bars
/// unstressed (K_σ rank-deficient), with fewer subspace vectors than DOFs.
/// </summary>
public class LinearBucklingReferenceTests
{
    [Theory]
    [InlineData(0)]  // crown load only: most bars unstressed
    [InlineData(1)]  // crown and first ring
    public void Subspace_iteration_matches_a_dense_generalised_eigensolution(int loadedRings)
    {
        var model = StructuralModel.Create(LatticeDome.Create(rise: 1.5, perRing: 10, loadedRings: loadedRings));
        var asm = new StructureAssembler(model);
        int n = model.Dofs.FreeCount;
        var zero = new double[3 * model.NodeCount];
        var k0 = new double[asm.Pattern.NonZeroCount];
        asm.Tangent(zero, k0);
        var linear = LinearStaticAnalysis.Run(model);
        var stress = linear.BarForces.Select((f, b) => f / model.BarArea[b]).ToArray();
        var ks = new double[k0.Length];
        asm.Tangent(zero, ks, TangentParts.GeometricOnly, stress);
        var A = Dense(asm, k0, n);
        var B = -Dense(asm, ks, n);
        var theta = A.Solve(B).Evd().EigenValues.Select(e => e.Real).Where(t => t > 1e-12).OrderByDescending(t => t).ToList();
        var expected = theta.Take(3).Select(t => 1 / t).ToList();

        var result = LinearBucklingAnalysis.Run(model, modeCount: 3);
        Assert.True(result.Converged);
        Assert.Equal(expected.Count, result.Modes.Count);
        for (int i = 0; i < expected.Count; i++)
            Assert.Equal(expected[i], result.Modes[i].LoadFactor, 1e-8 * expected[i]);
    }

    private static Matrix<double> Dense(StructureAssembler asm, double[] values, int n)
    {
        var m = Matrix<double>.Build.Dense(n, n);
        var cp = asm.Pattern.ColumnPointers;
        var ri = asm.Pattern.RowIndices;
        for (int j = 0; j < n; j++)
            for (int p = cp[j]; p < cp[j + 1]; p++) { m[ri[p], j] = values[p]; m[j, ri[p]] = values[p]; }
        return m;
    }
}
