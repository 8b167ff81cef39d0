using PathService.Engine.Sparse;
using static PathService.Engine.Tests.Sparse.SparseTestMatrices;

namespace PathService.Engine.Tests.Sparse;

public class OrderingTests
{
    public static TheoryData<int, double, int> Patterns => new()
    {
        { 0, 0, 1 }, { 1, 0, 2 }, { 5, 0, 3 }, { 20, 2, 4 }, { 50, 1, 5 }, { 120, 6, 6 }, { 300, 4, 7 }, { 200, 40, 8 },
    };

    [Theory]
    [MemberData(nameof(Patterns))]
    public void Amd_ReturnsAPermutationWhoseInverseIsInversePermutation(int n, double perColumn, int seed)
    {
        var s = LdlSymbolic.Analyze(RandomPattern(n, perColumn, seed));
        Assert.Equal(Enumerable.Range(0, n), s.Permutation.OrderBy(i => i));
        for (int k = 0; k < n; k++) Assert.Equal(k, s.InversePermutation[s.Permutation[k]]);
    }

    [Fact]
    public void Amd_IsDeterministic_SameInputGivesSamePermutation()
    {
        var (pattern, _) = TrussLattice(6, 5, 4, 0.5, 11);
        var first = LdlSymbolic.Analyze(pattern).Permutation;
        var again = LdlSymbolic.Analyze(SymmetricPattern.FromEntries(pattern.Size, Entries(pattern))).Permutation;
        Assert.Equal(first, again);
    }

    [Fact]
    public void Natural_IsTheIdentity()
    {
        var s = LdlSymbolic.Analyze(RandomPattern(30, 3, 1), OrderingMethod.Natural);
        Assert.Equal(Enumerable.Range(0, 30), s.Permutation);
        Assert.Equal(OrderingMethod.Natural, s.Ordering);
    }

    [Fact]
    public void Amd_GivesFewerFactorNonzerosThanNatural_On30x30GridLaplacian()
    {
        var (pattern, _) = GridLaplacian(30);
        long natural = LdlSymbolic.Analyze(pattern, OrderingMethod.Natural).FactorNonZeroCount;
        long amd = LdlSymbolic.Analyze(pattern).FactorNonZeroCount;
        Assert.True(amd < natural * 0.7, $"AMD {amd} vs natural {natural}");
    }

    [Fact]
    public void Amd_GivesFewerFactorNonzerosThanNatural_OnRandom3DTrussLattice()
    {
        var (pattern, _) = TrussLattice(8, 8, 8, 0.4, 21);
        var natural = LdlSymbolic.Analyze(pattern, OrderingMethod.Natural);
        var amd = LdlSymbolic.Analyze(pattern);
        Assert.True(amd.FactorNonZeroCount < natural.FactorNonZeroCount, $"AMD {amd.FactorNonZeroCount} vs natural {natural.FactorNonZeroCount}");
        Assert.True(amd.FactorFlopCount < natural.FactorFlopCount);
    }

    [Fact]
    public void Amd_GivesFewerFactorNonzerosThanNatural_OnRandomlyNumberedGrid()
    {
        // A grid with shuffled numbering: natural order has large fill, AMD must not.
        var (grid, _) = GridLaplacian(20);
        var rng = new Random(3);
        var relabel = Enumerable.Range(0, grid.Size).OrderBy(_ => rng.Next()).ToArray();
        var pattern = SymmetricPattern.FromEntries(grid.Size, Entries(grid).Select(e => (relabel[e.Item1], relabel[e.Item2])));
        long natural = LdlSymbolic.Analyze(pattern, OrderingMethod.Natural).FactorNonZeroCount;
        long amd = LdlSymbolic.Analyze(pattern).FactorNonZeroCount;
        Assert.True(amd < natural / 3, $"AMD {amd} vs natural {natural}");
    }

    [Fact]
    public void AmdAndNatural_GiveTheSameSolution()
    {
        var pattern = RandomPattern(150, 5, 31);
        var values = RandomSpdValues(pattern, 32);
        var b = RandomVector(150, 33);
        var x = new double[2][];
        int t = 0;
        foreach (var ordering in new[] { OrderingMethod.Natural, OrderingMethod.ApproximateMinimumDegree })
        {
            var f = new LdlFactorization(LdlSymbolic.Analyze(pattern, ordering));
            Assert.Equal(LdlStatus.Success, f.Factorize(values));
            x[t] = new double[150];
            f.Solve(b, x[t++]);
        }
        for (int i = 0; i < 150; i++) Assert.Equal(x[0][i], x[1][i], 1e-12);
    }

    internal static IEnumerable<(int, int)> Entries(SymmetricPattern p)
    {
        for (int j = 0; j < p.Size; j++)
            for (int s = p.ColumnPointers[j]; s < p.ColumnPointers[j + 1]; s++)
                yield return (p.RowIndices[s], j);
    }
}
