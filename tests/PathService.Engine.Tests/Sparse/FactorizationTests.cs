using MathNet.Numerics.LinearAlgebra;
using PathService.Engine.Sparse;
using static PathService.Engine.Tests.Sparse.SparseTestMatrices;

namespace PathService.Engine.Tests.Sparse;

public class FactorizationTests
{
    [Theory]
    [InlineData(1, 0.0, 1)]
    [InlineData(10, 2.0, 2)]
    [InlineData(50, 3.0, 3)]
    [InlineData(120, 5.0, 4)]
    [InlineData(200, 8.0, 5)]
    [InlineData(300, 6.0, 6)]
    [InlineData(300, 30.0, 7)]
    public void RandomSpd_SolveHasResidualBelow1e10_MatchesDenseSolve_AndHasNoNegativePivots(int n, double perColumn, int seed)
    {
        var pattern = RandomPattern(n, perColumn, seed);
        var values = RandomSpdValues(pattern, seed + 100);
        var b = RandomVector(n, seed + 200);
        var f = new LdlFactorization(LdlSymbolic.Analyze(pattern));

        Assert.Equal(LdlStatus.Success, f.Factorize(values));
        var x = new double[n];
        f.Solve(b, x);

        Assert.True(RelativeResidual(pattern, values, x, b) < 1e-10);
        var dense = ToDense(pattern, values).Solve(Vector<double>.Build.DenseOfArray(b));
        for (int i = 0; i < n; i++) Assert.Equal(dense[i], x[i], 1e-10);
        Assert.Equal(0, f.NegativePivotCount);
        Assert.Equal(-1, f.TinyPivotIndex);
        Assert.True(f.SmallestPivotRatio > 0 && f.SmallestPivotRatio <= 1);
    }

    [Theory]
    [InlineData(20, 2.0, 1)]
    [InlineData(60, 3.0, 2)]
    [InlineData(100, 4.0, 3)]
    [InlineData(150, 3.0, 4)]
    [InlineData(250, 5.0, 5)]
    public void RandomIndefinite_NegativePivotCountEqualsNumberOfNegativeEigenvalues(int n, double perColumn, int seed)
    {
        // B with diagonal in [-3,3]; A = B - sigma I with sigma midway in a wide gap of B's spectrum near its middle.
        var pattern = RandomPattern(n, perColumn, seed);
        var bValues = RandomValues(pattern, seed + 50, (_, _, rng) => 6 * rng.NextDouble() - 3);
        var eig = ToDense(pattern, bValues).Evd().EigenValues.Select(z => z.Real).OrderBy(v => v).ToArray();
        int gap = Enumerable.Range(n / 4, n / 2).MaxBy(k => eig[k + 1] - eig[k]);
        double sigma = 0.5 * (eig[gap] + eig[gap + 1]);
        var values = (double[])bValues.Clone();
        for (int j = 0; j < n; j++) values[pattern.ColumnPointers[j + 1] - 1] -= sigma;
        int negativeEigenvalues = eig.Count(v => v < sigma);

        var f = new LdlFactorization(LdlSymbolic.Analyze(pattern));
        Assert.NotEqual(LdlStatus.ZeroPivot, f.Factorize(values));
        Assert.Equal(negativeEigenvalues, f.NegativePivotCount);
        Assert.InRange(negativeEigenvalues, 1, n - 1);

        var b = RandomVector(n, seed);
        var x = new double[n];
        f.Solve(b, x);
        Assert.True(RelativeResidual(pattern, values, x, b) < 1e-8);
    }

    [Fact]
    public void ZeroRowAndColumn_GivesZeroPivotAtThatOriginalIndex()
    {
        var pattern = RandomPattern(40, 4, 9);
        var values = RandomSpdValues(pattern, 10);
        // Zero out row/column 17 (all its entries, diagonal included).
        for (int j = 0; j < 40; j++)
            for (int s = pattern.ColumnPointers[j]; s < pattern.ColumnPointers[j + 1]; s++)
                if (j == 17 || pattern.RowIndices[s] == 17) values[s] = 0;
        foreach (var ordering in new[] { OrderingMethod.Natural, OrderingMethod.ApproximateMinimumDegree })
        {
            var f = new LdlFactorization(LdlSymbolic.Analyze(pattern, ordering));
            Assert.Equal(LdlStatus.ZeroPivot, f.Factorize(values));
            Assert.Equal(17, f.TinyPivotIndex);
            Assert.Equal(0, f.SmallestPivotRatio);
            Assert.Throws<InvalidOperationException>(() => f.Solve(new double[40]));
        }
    }

    [Fact]
    public void UnsupportedBarInsideAStiffStructure_GivesTinyOrZeroPivotAtOneOfItsDegreesOfFreedom()
    {
        // SPD truss lattice plus two extra degrees of freedom 'a', 'b' joined only by a spring k[1 -1; -1 1]:
        // rank-deficient block, null vector e_a + e_b.
        var (lattice, latticeValues) = TrussLattice(3, 3, 3, 0.5, 5);
        int n = lattice.Size + 2, a = 13, bIndex = 40;
        var oldToNew = Enumerable.Range(0, lattice.Size).Select(i => i < a ? i : i < bIndex - 1 ? i + 1 : i + 2).ToArray();
        var entries = OrderingTests.Entries(lattice).Select(e => (oldToNew[e.Item1], oldToNew[e.Item2])).Append((a, bIndex));
        var pattern = SymmetricPattern.FromEntries(n, entries);
        var values = new double[pattern.NonZeroCount];
        foreach (var ((i, j), s) in OrderingTests.Entries(lattice).Select((e, s) => (e, s)))
            values[pattern.FindSlot(oldToNew[i], oldToNew[j])] = latticeValues[s];
        double k = 0.3;
        values[pattern.FindSlot(a, a)] = k;
        values[pattern.FindSlot(bIndex, bIndex)] = k;
        values[pattern.FindSlot(a, bIndex)] = -k;

        foreach (var ordering in new[] { OrderingMethod.Natural, OrderingMethod.ApproximateMinimumDegree })
        {
            var f = new LdlFactorization(LdlSymbolic.Analyze(pattern, ordering));
            Assert.NotEqual(LdlStatus.Success, f.Factorize(values));
            Assert.Contains(f.TinyPivotIndex, new[] { a, bIndex });
        }
    }

    [Fact]
    public void FreeFloatingTruss_IsSingular_AndFlaggedTinyOrZero()
    {
        // No grounding springs: rigid-body motions make the stiffness singular.
        var (pattern, values) = TrussLattice(3, 3, 2, 1.0, 8, ground: 0);
        var f = new LdlFactorization(LdlSymbolic.Analyze(pattern));
        Assert.NotEqual(LdlStatus.Success, f.Factorize(values));
        Assert.InRange(f.TinyPivotIndex, 0, pattern.Size - 1);
        Assert.True(f.SmallestPivotRatio <= 1e-11);
    }

    [Fact]
    public void NearlySingularMatrix_GivesTinyPivot_AndTheFactorIsStillUsable()
    {
        var pattern = SymmetricPattern.FromEntries(2, new[] { (0, 1) });
        double[] values = { 1, 1, 1 + 1e-13 }; // slots: (0,0), (0,1), (1,1)
        var f = new LdlFactorization(LdlSymbolic.Analyze(pattern, OrderingMethod.Natural));
        Assert.Equal(LdlStatus.TinyPivot, f.Factorize(values));
        Assert.Equal(1, f.TinyPivotIndex);
        Assert.InRange(f.SmallestPivotRatio, 0, 1e-11);
        // A x = b for x = (1, -1): b = (0, -1e-13).
        var x = new double[] { 0, -1e-13 };
        f.Solve(x);
        Assert.Equal(1, x[0], 1e-2);
        Assert.Equal(-1, x[1], 1e-2);
    }

    [Fact]
    public void SingularPivotRatio_IsRelativeToTheDiagonalScale()
    {
        var pattern = SymmetricPattern.FromEntries(2, new[] { (0, 1) });
        double[] values = { 1e8, 1e8, 1e8 * (1 + 1e-9) };
        var f = new LdlFactorization(LdlSymbolic.Analyze(pattern, OrderingMethod.Natural));
        Assert.Equal(LdlStatus.Success, f.Factorize(values));
        Assert.Equal(LdlStatus.TinyPivot, f.Factorize(values, singularPivotRatio: 1e-8));
    }

    [Fact]
    public void ZeroDiagonalPivot_IsScaledByLargestDiagonal_AndCountsInertia()
    {
        // [[4, 2], [2, 0]] -> d = (4, -1): one negative eigenvalue; A_11 = 0 so scale_1 = 4.
        var pattern = SymmetricPattern.FromEntries(2, new[] { (0, 1) });
        double[] values = { 4, 2, 0 };
        var f = new LdlFactorization(LdlSymbolic.Analyze(pattern, OrderingMethod.Natural));
        Assert.Equal(LdlStatus.Success, f.Factorize(values));
        Assert.Equal(1, f.NegativePivotCount);
        Assert.Equal(0.25, f.SmallestPivotRatio, 1e-15);
    }

    [Fact]
    public void Refactorization_WithNewValuesOnTheSameSymbolic_GivesTheNewSolution()
    {
        var (pattern, values) = TrussLattice(4, 4, 3, 0.5, 12);
        var f = new LdlFactorization(LdlSymbolic.Analyze(pattern));
        var b = RandomVector(pattern.Size, 13);
        var x = new double[pattern.Size];
        Assert.Equal(LdlStatus.Success, f.Factorize(values));

        for (int round = 0; round < 3; round++)
        {
            var scaled = values.Select((v, s) => v * (1 + 0.3 * round) + (pattern.RowIndices[s] == ColumnOf(pattern, s) ? round : 0)).ToArray();
            Assert.Equal(LdlStatus.Success, f.Factorize(scaled));
            f.Solve(b, x);
            Assert.True(RelativeResidual(pattern, scaled, x, b) < 1e-10);
            var dense = ToDense(pattern, scaled).Solve(Vector<double>.Build.DenseOfArray(b));
            for (int i = 0; i < x.Length; i++) Assert.Equal(dense[i], x[i], 1e-8);
        }
    }

    [Fact]
    public void FactorizeAndSolve_AllocateNoManagedMemoryAfterTheFirstCall()
    {
        var (pattern, values) = TrussLattice(5, 4, 4, 0.5, 14);
        var f = new LdlFactorization(LdlSymbolic.Analyze(pattern));
        var b = RandomVector(pattern.Size, 15);
        var x = new double[pattern.Size];
        f.Factorize(values);
        f.Solve(b, x);
        f.Solve(x);

        long before = GC.GetAllocatedBytesForCurrentThread();
        f.Factorize(values);
        f.Solve(b, x);
        f.Solve(x);
        long after = GC.GetAllocatedBytesForCurrentThread();
        Assert.Equal(0, after - before);
    }

    [Fact]
    public void Solve_BeforeFactorize_Throws()
    {
        var f = new LdlFactorization(LdlSymbolic.Analyze(RandomPattern(5, 1, 1)));
        Assert.Throws<InvalidOperationException>(() => f.Solve(new double[5]));
    }

    [Fact]
    public void Factorize_RejectsValuesOfWrongLength()
    {
        var f = new LdlFactorization(LdlSymbolic.Analyze(RandomPattern(5, 1, 1)));
        Assert.Throws<ArgumentException>(() => f.Factorize(new double[1]));
    }

    [Fact]
    public void EmptyMatrix_FactorizesAndSolvesTrivially()
    {
        var f = new LdlFactorization(LdlSymbolic.Analyze(SymmetricPattern.FromEntries(0, Array.Empty<(int, int)>())));
        Assert.Equal(LdlStatus.Success, f.Factorize(ReadOnlySpan<double>.Empty));
        f.Solve(Span<double>.Empty);
    }

    private static int ColumnOf(SymmetricPattern p, int slot)
    {
        // Columns are never empty, so an exact hit is the first slot of column j.
        int j = Array.BinarySearch(p.ColumnPointers, slot);
        return j >= 0 ? j : ~j - 1;
    }
}
