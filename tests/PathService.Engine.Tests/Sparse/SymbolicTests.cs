using PathService.Engine.Sparse;
using static PathService.Engine.Tests.Sparse.SparseTestMatrices;

namespace PathService.Engine.Tests.Sparse;

public class SymbolicTests
{
    /// <summary>Dense boolean elimination of P A P^T: column counts of L and parent = first sub-diagonal row.</summary>
    private static (int[] Parent, int[] Counts) BruteForce(SymmetricPattern pattern, int[] inv)
    {
        int n = pattern.Size;
        var nz = new bool[n, n];
        foreach (var (i, j) in OrderingTests.Entries(pattern))
        {
            nz[inv[i], inv[j]] = true;
            nz[inv[j], inv[i]] = true;
        }
        var parent = new int[n];
        var counts = new int[n];
        for (int k = 0; k < n; k++)
        {
            parent[k] = -1;
            for (int i = k + 1; i < n; i++)
            {
                if (!nz[i, k]) continue;
                counts[k]++;
                if (parent[k] == -1) parent[k] = i;
                for (int j = k + 1; j < n; j++)
                    if (nz[j, k]) nz[i, j] = true;
            }
        }
        return (parent, counts);
    }

    [Theory]
    [InlineData(1, 0.0, 1)]
    [InlineData(8, 1.0, 2)]
    [InlineData(15, 2.0, 3)]
    [InlineData(30, 3.0, 4)]
    [InlineData(40, 1.5, 5)]
    [InlineData(60, 4.0, 6)]
    [InlineData(60, 12.0, 7)]
    public void ParentAndColumnCounts_MatchBruteForceDenseSymbolicFactorization(int n, double perColumn, int seed)
    {
        var pattern = RandomPattern(n, perColumn, seed);
        foreach (var ordering in new[] { OrderingMethod.Natural, OrderingMethod.ApproximateMinimumDegree })
        {
            var s = LdlSymbolic.Analyze(pattern, ordering);
            var (parent, counts) = BruteForce(pattern, s.InversePermutation);
            Assert.Equal(parent, s.Parent);
            Assert.Equal(counts, s.ColumnCounts);
            Assert.Equal(counts.Sum(c => (long)c), s.FactorNonZeroCount);
            Assert.Equal(counts.Sum(c => (double)c * c + c), s.FactorFlopCount);
        }
    }

    [Fact]
    public void TridiagonalMatrix_HasPathEliminationTreeAndNoFill()
    {
        var pattern = SymmetricPattern.FromEntries(5, Enumerable.Range(0, 4).Select(i => (i, i + 1)));
        var s = LdlSymbolic.Analyze(pattern, OrderingMethod.Natural);
        Assert.Equal(new[] { 1, 2, 3, 4, -1 }, s.Parent);
        Assert.Equal(new[] { 1, 1, 1, 1, 0 }, s.ColumnCounts);
        Assert.True(s.OrderingTime >= TimeSpan.Zero && s.SymbolicTime >= TimeSpan.Zero);
    }

    [Fact]
    public void Amd_OnArrowMatrix_CreatesNoFill()
    {
        // Vertex 0 coupled to all others: natural order fills completely, AMD none.
        int n = 12;
        var pattern = SymmetricPattern.FromEntries(n, Enumerable.Range(1, n - 1).Select(i => (0, i)));
        Assert.Equal(n * (n - 1) / 2, LdlSymbolic.Analyze(pattern, OrderingMethod.Natural).FactorNonZeroCount);
        var amd = LdlSymbolic.Analyze(pattern);
        Assert.Equal(n - 1, amd.FactorNonZeroCount);
    }
}
