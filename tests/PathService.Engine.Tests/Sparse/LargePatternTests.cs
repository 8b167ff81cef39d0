using System.Diagnostics;
using PathService.Engine.Sparse;
using Xunit.Abstractions;
using static PathService.Engine.Tests.Sparse.SparseTestMatrices;

namespace PathService.Engine.Tests.Sparse;

public class LargePatternTests(ITestOutputHelper output)
{
    [Fact]
    public void Amd_On98kColumn3DTrussPattern_HasLessFillThanTheNaturalOrder()
    {
        var (pattern, _) = TrussLattice(32, 32, 32, 0.25, 41);
        // Speed is the bench's business (`scaling`); this test holds the ordering's result only.
        var amd = LdlSymbolic.Analyze(pattern);
        var natural = LdlSymbolic.Analyze(pattern, OrderingMethod.Natural);
        output.WriteLine($"n={pattern.Size} nnz(upper)={pattern.NonZeroCount} ordering={amd.OrderingTime.TotalMilliseconds:F0} ms " +
                         $"symbolic={amd.SymbolicTime.TotalMilliseconds:F0} ms nnz(L)={amd.FactorNonZeroCount} flops={amd.FactorFlopCount:E3} " +
                         $"natural nnz(L)={natural.FactorNonZeroCount} flops={natural.FactorFlopCount:E3}");
        Assert.True(amd.FactorNonZeroCount < natural.FactorNonZeroCount);
    }

    [Fact]
    public void Factorize_On5kColumn3DTruss_SolvesToResidualBelow1e10_WithNoNegativePivots()
    {
        var (pattern, values) = TrussLattice(12, 12, 12, 0.25, 42);
        var clock = Stopwatch.StartNew();
        var symbolic = LdlSymbolic.Analyze(pattern);
        var analyze = clock.Elapsed;
        var f = new LdlFactorization(symbolic);
        clock.Restart();
        var status = f.Factorize(values);
        var factorize = clock.Elapsed;
        var b = RandomVector(pattern.Size, 43);
        var x = new double[pattern.Size];
        clock.Restart();
        f.Solve(b, x);
        var solve = clock.Elapsed;
        output.WriteLine($"n={pattern.Size} nnz(L)={symbolic.FactorNonZeroCount} analyze={analyze.TotalMilliseconds:F0} ms " +
                         $"factorize={factorize.TotalMilliseconds:F0} ms solve={solve.TotalMilliseconds:F0} ms " +
                         $"smallest pivot ratio={f.SmallestPivotRatio:E2}");
        Assert.Equal(LdlStatus.Success, status);
        Assert.Equal(0, f.NegativePivotCount);
        Assert.True(RelativeResidual(pattern, values, x, b) < 1e-10);
    }
}
