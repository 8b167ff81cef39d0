// The backward-error check and iterative refinement around the pivot-free supernodal LDL^T, against MathNet's dense
// LU and symmetric eigenvalues: near-singular indefinite truss tangents, and a constructed indefinite matrix whose
// pivot-free factorisation is unstable.

using MathNet.Numerics.LinearAlgebra;
using PathService.Bench.Models;
using PathService.Engine.Assembly;
using PathService.Engine.Model;
using PathService.Engine.Sparse;
using static PathService.Engine.Tests.Sparse.SparseTestMatrices;

namespace PathService.Engine.Tests.Sparse;

public class RefinedSolveTests
{
    /// <summary>Normwise backward error ‖b − Ax‖∞ / (‖A‖∞‖x‖∞ + ‖b‖∞) (Rigal and Gaches 1967), computed densely.</summary>
    private static double DenseBackwardError(Matrix<double> a, double[] x, double[] b)
    {
        var xv = Vector<double>.Build.DenseOfArray(x);
        var bv = Vector<double>.Build.DenseOfArray(b);
        var r = bv - a * xv;
        return r.InfinityNorm() / (a.InfinityNorm() * xv.InfinityNorm() + bv.InfinityNorm());
    }

    private static double RelativeDifference(double[] x, Vector<double> y) =>
        (Vector<double>.Build.DenseOfArray(x) - y).InfinityNorm() / y.InfinityNorm();

    private static RefinedFactorization Refined(SymmetricPattern pattern, OrderingMethod ordering = OrderingMethod.ApproximateMinimumDegree) =>
        new(new SupernodalLdlFactorization(LdlSymbolic.Analyze(pattern, ordering)));

    /// <summary>The linear stiffness of a small double-layer roof (240 free DOFs) and its dense eigenvalues, ascending.</summary>
    private static (SymmetricPattern Pattern, double[] K0, Matrix<double> Dense, double[] Eigenvalues) RoofStiffness()
    {
        var model = StructuralModel.Create(SpaceTrussRoof.Create(6));
        var asm = new StructureAssembler(model);
        var k0 = new double[asm.Pattern.NonZeroCount];
        asm.Tangent(new double[3 * model.NodeCount], k0);
        var dense = ToDense(asm.Pattern, k0);
        var eig = dense.Evd(Symmetricity.Symmetric).EigenValues.Select(e => e.Real).OrderBy(e => e).ToArray();
        return (asm.Pattern, k0, dense, eig);
    }

    /// <summary>
    /// K0 − σI with σ placed 1e-10·‖K0‖₂ above an eigenvalue: an indefinite tangent with one eigenvalue 1e-10 relative
    /// (condition number 1e10), as at a critical point. The inertia of the sparse factor equals the count of negative
    /// dense eigenvalues; the solve's backward error, recomputed densely, is within the 1e-12 bound; the solution
    /// agrees with MathNet's dense LU (partial pivoting) to the accuracy the condition number allows (κ·u ≈ 1e-6).
    /// </summary>
    [Theory]
    [InlineData(0)]
    [InlineData(5)]
    [InlineData(40)]
    public void Roof_stiffness_shifted_next_to_an_eigenvalue_solves_within_the_bound_with_the_dense_inertia(int index)
    {
        var (pattern, k0, dense, eig) = RoofStiffness();
        double norm = eig.Max(Math.Abs);
        double sigma = eig[index] + 1e-10 * norm;
        var shifted = (double[])k0.Clone();
        for (int j = 0; j < pattern.Size; j++) shifted[pattern.ColumnPointers[j + 1] - 1] -= sigma;
        var denseShifted = dense - sigma * Matrix<double>.Build.DenseIdentity(pattern.Size);
        int expectedNegatives = eig.Count(e => e - sigma < 0);
        Assert.Equal(index + 1, expectedNegatives); // the eigenvalues are separated by far more than 1e-10·‖K0‖

        var f = Refined(pattern);
        Assert.NotEqual(LdlStatus.ZeroPivot, f.Factorize(shifted));
        Assert.Equal(expectedNegatives, f.NegativePivotCount);
        var b = RandomVector(pattern.Size, 11 + index);
        var x = new double[pattern.Size];
        f.Solve(b, x);
        double omega = DenseBackwardError(denseShifted, x, b);
        Assert.True(omega <= RefinedFactorization.DefaultBound, $"backward error {omega:E2}");
        // The engine's estimate is the same quantity or (below the bound) an upper estimate of it; its exact form agrees.
        Assert.True(f.LastBackwardError >= 0.99 * omega && f.LastBackwardError <= RefinedFactorization.DefaultBound);
        Assert.Equal(omega, f.BackwardError(b, x), 0.05 * omega);
        var xd = denseShifted.LU().Solve(Vector<double>.Build.DenseOfArray(b));
        double diff = RelativeDifference(x, xd);
        // Measured 1e-8 to 1.1e-6 (the worst at index 40); κ·u ≈ 1e-6 is the scale (Higham 2002, Thm 7.2).
        Assert.True(diff < 1e-5, $"forward difference from dense LU {diff:E2}");
        Assert.Equal(0, f.UnresolvedSolves);
    }

    /// <summary>
    /// 2×2 blocks [[ε, c], [c, 1]] (ε from 1e-7 to 1e-6, c about 1) along the diagonal, weakly coupled, factorised in
    /// their natural order without pivoting: each block has one negative eigenvalue, and the tiny first pivot makes
    /// the multipliers c/ε ≈ 1e6 (element growth, Higham 2002 §11.1), so the plain solve has a backward error far above
    /// the bound. The check sees it, refinement brings it below 1e-12, and the solution then matches dense LU with
    /// partial pivoting to round-off (the matrix itself is well conditioned); the inertia is the dense eigenvalue count.
    /// </summary>
    [Fact]
    public void Unstable_pivot_free_factor_of_an_indefinite_matrix_is_caught_by_the_check_and_refined_below_the_bound()
    {
        const int blocks = 60;
        int n = 2 * blocks;
        var rng = new Random(5);
        var a = Matrix<double>.Build.Dense(n, n);
        for (int k = 0; k < blocks; k++)
        {
            int i = 2 * k;
            double c = 0.5 + rng.NextDouble();
            a[i, i] = 1e-7 + 9e-7 * rng.NextDouble();
            a[i, i + 1] = a[i + 1, i] = c;
            a[i + 1, i + 1] = 1 + rng.NextDouble();
            if (k + 1 < blocks) a[i + 1, i + 2] = a[i + 2, i + 1] = 0.01 * (rng.NextDouble() - 0.5);
        }
        var entries = new List<(int, int)>();
        for (int j = 0; j < n; j++)
            for (int i = 0; i <= j; i++)
                if (a[i, j] != 0) entries.Add((i, j));
        var pattern = SymmetricPattern.FromEntries(n, entries);
        var values = FromDense(pattern, a);
        int expectedNegatives = a.Evd(Symmetricity.Symmetric).EigenValues.Count(e => e.Real < 0);
        Assert.Equal(blocks, expectedNegatives);

        var plain = new SupernodalLdlFactorization(LdlSymbolic.Analyze(pattern, OrderingMethod.Natural));
        Assert.Equal(LdlStatus.Success, plain.Factorize(values));
        var b = RandomVector(n, 3);
        var xPlain = new double[n];
        plain.Solve(b, xPlain);
        double omegaPlain = DenseBackwardError(a, xPlain, b);
        Assert.True(omegaPlain > 10 * RefinedFactorization.DefaultBound, $"the plain solve's backward error {omegaPlain:E2} should exceed the bound");

        var f = Refined(pattern, OrderingMethod.Natural);
        f.Factorize(values);
        Assert.Equal(expectedNegatives, f.NegativePivotCount);
        var x = new double[n];
        f.Solve(b, x);
        Assert.True(f.RefinementSteps >= 1);
        Assert.Equal(omegaPlain, f.LargestBackwardError, 0.5 * omegaPlain);
        double omega = DenseBackwardError(a, x, b);
        Assert.True(omega <= RefinedFactorization.DefaultBound, $"refined backward error {omega:E2}");
        Assert.Equal(0, f.UnresolvedSolves);
        var xd = a.LU().Solve(Vector<double>.Build.DenseOfArray(b));
        // Measured 2e-16 after one refinement step, 1.4e-10 without.
        Assert.True(RelativeDifference(x, xd) < 3e-15, $"refined solution differs from dense LU by {RelativeDifference(x, xd):E2}");
        Assert.True(RelativeDifference(xPlain, xd) > 1e-11, "without refinement the solution should be visibly less accurate");

        // Two columns in one pass: each is checked and refined on its own, with the same result as two single solves.
        var b2 = RandomVector(n, 4);
        var x2 = new double[n];
        f.Solve(b2, x2);
        var c1 = (double[])b.Clone();
        var c2 = (double[])b2.Clone();
        int before = f.RefinementSteps;
        f.Solve2(c1, c2);
        Assert.True(f.RefinementSteps > before);
        Assert.Equal(x, c1);
        Assert.Equal(x2, c2);
    }

    /// <summary>A well-conditioned definite roof stiffness passes the check at once: no refinement, ω near round-off.</summary>
    [Fact]
    public void Definite_roof_stiffness_needs_no_refinement()
    {
        var (pattern, k0, dense, _) = RoofStiffness();
        var f = Refined(pattern);
        Assert.Equal(LdlStatus.Success, f.Factorize(k0));
        var b1 = RandomVector(pattern.Size, 1);
        var b2 = RandomVector(pattern.Size, 2);
        var x1 = (double[])b1.Clone();
        var x2 = (double[])b2.Clone();
        f.Solve2(x1, x2);
        Assert.Equal(0, f.RefinementSteps);
        Assert.Equal(2, f.CheckedSolves);
        // Measured 4e-17 (a few units of round-off).
        Assert.True(f.LargestBackwardError < 5e-16, $"backward error {f.LargestBackwardError:E2}");
        Assert.True(DenseBackwardError(dense, x1, b1) < 5e-16);
    }

    /// <summary>
    /// The trace summary counts the refinement steps of its solves: 0 at the default bound on the lattice dome through
    /// its limit points (every solve is accurate at once), and, with the bound set to 0 so that every solve is refined
    /// until ω stops falling, a positive count with the same path (refinement only polishes solutions that were
    /// already accurate: the points agree to round-off).
    /// </summary>
    [Fact]
    public void Trace_summary_counts_refinements_and_refinement_leaves_the_path_unchanged()
    {
        var model = StructuralModel.Create(Fixtures.LatticeDome.Create(rise: 1.5, perRing: 10, loadedRings: 0));
        var crown = new DofReference("crown", Axis.Z);
        var controls = new Continuation.SolverControls { InitialLoadIncrement = 1.0, Monitored = [crown], MaxPoints = 40 };
        var plain = new Continuation.PathTracer(model, controls).Trace().ToList();
        var refined = new Continuation.PathTracer(model, controls) { BackwardErrorBound = 0 }.Trace().ToList();
        var s0 = plain.OfType<Continuation.PathSummary>().Single();
        var s1 = refined.OfType<Continuation.PathSummary>().Single();
        Assert.Equal(0, s0.Refinements);
        Assert.True(s1.Refinements > 0);
        var p0 = plain.OfType<Continuation.PathPoint>().ToList();
        var p1 = refined.OfType<Continuation.PathPoint>().ToList();
        Assert.Equal(p0.Count, p1.Count);
        Assert.Equal(p0.Select(p => p.NegativePivots), p1.Select(p => p.NegativePivots));
        double scale = p0.Max(p => Math.Abs(p.LoadFactor));
        // Measured: 630 refinement steps in 40 points; load factors agree to 2.7e-16 of the largest.
        for (int i = 0; i < p0.Count; i++) Assert.Equal(p0[i].LoadFactor, p1[i].LoadFactor, 3e-15 * scale);
        Assert.Equal(plain.OfType<Continuation.CriticalPoint>().Count(), refined.OfType<Continuation.CriticalPoint>().Count());
    }
}
