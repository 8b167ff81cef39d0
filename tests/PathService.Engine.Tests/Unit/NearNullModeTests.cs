using MathNet.Numerics.LinearAlgebra;
using PathService.Engine.Continuation;
using PathService.Engine.Model;
using PathService.Engine.Stability;
using PathService.Engine.Tests.Fixtures;

namespace PathService.Engine.Tests.Unit;

/// <summary>
/// Inverse iteration for the eigenvalue of the tangent nearest zero, checked against MathNet's dense symmetric
/// eigen-decomposition of the same matrix.
/// </summary>
public class NearNullModeTests
{
    [Fact]
    public void A_guess_orthogonal_to_the_wanted_mode_still_finds_it_when_the_start_is_mixed()
    {
        var model = StructuralModel.Create(LatticeDome.Create());
        var sys = new EquilibriumSystem(model, 1e-11);
        sys.Refactor(new double[3 * model.NodeCount]);
        int n = sys.FreeCount;
        var k = Matrix<double>.Build.Dense(n, n);
        var e = new double[n];
        var column = new double[n];
        for (int j = 0; j < n; j++)
        {
            Array.Clear(e);
            e[j] = 1;
            sys.Assembler.Multiply(sys.Values, e, column);
            k.SetColumn(j, column);
        }
        var evd = k.Evd(Symmetricity.Symmetric);
        var order = Enumerable.Range(0, n).OrderBy(i => Math.Abs(evd.EigenValues[i].Real)).ToArray();
        double nearest = evd.EigenValues[order[0]].Real;
        // A guess that is another mode exactly (as a symmetric structure's mode of another symmetry class would be):
        // the first eigenvalue above the nearest one's cluster.
        int other = order.First(i => Math.Abs(evd.EigenValues[i].Real) > 1.5 * Math.Abs(nearest));
        double otherValue = evd.EigenValues[other].Real;
        var guess = evd.EigenVectors.Column(other).ToArray();

        var (plain, _) = NearNullMode.Compute(sys, guess);
        var (mixed, mode) = NearNullMode.Compute(sys, guess, mixStart: true);

        // Started inside the other mode, plain inverse iteration stays near it (only round-off leaks out of it); the
        // mixed start reaches the nearest.
        Assert.Equal(otherValue, plain, 1e-2 * Math.Abs(otherValue));
        Assert.True(Math.Abs(plain) > 1.2 * Math.Abs(nearest), $"plain start gave {plain}, nearest is {nearest}");
        // The dome's lowest modes come in near-equal pairs (its symmetry), so the iteration ends inside that cluster.
        Assert.Equal(nearest, mixed, 1e-3 * Math.Abs(nearest));
        var low = order.Where(i => Math.Abs(evd.EigenValues[i].Real) < 1.5 * Math.Abs(nearest)).ToArray();
        var x = Vector<double>.Build.DenseOfArray(mode);
        double inCluster = Math.Sqrt(low.Sum(i => Math.Pow(evd.EigenVectors.Column(i).DotProduct(x), 2)));
        Assert.True(inCluster > 0.999 * x.L2Norm(), $"only {inCluster / x.L2Norm():P3} of the mode lies in the lowest cluster");
    }

    /// <summary>
    /// Eigenvalue iterations skip the backward-error check only on a factor that a checked solve has vouched for: before
    /// any checked solve with a new factorisation, and on a factor whose checked solve exceeded the bound (here forced by
    /// a bound of 0, "refine always"), their solves are checked like any other; the result is the same x either way.
    /// </summary>
    /// <summary>The paired eigenvalue solve of block iteration gives two single solves' answers bit for bit, counts as two,
    /// and is checked like them until a checked solve has vouched for the factor.</summary>
    [Fact]
    public void Paired_eigenvalue_solve_equals_two_single_ones()
    {
        var model = StructuralModel.Create(LatticeDome.Create());
        var sys = new EquilibriumSystem(model, 1e-11);
        sys.Refactor(new double[3 * model.NodeCount]);
        int n = sys.FreeCount;
        double[] Vector(double shift) => Enumerable.Range(0, n).Select(i => Math.Sin(i + shift)).ToArray();

        long checkedBefore = sys.Refined.CheckedSolves;
        sys.EigenSolve2(Vector(1), Vector(2)); // not vouched for yet: the first is checked (and vouches), as with two single calls
        Assert.Equal(checkedBefore + 1, sys.Refined.CheckedSolves);
        Assert.Equal(1, sys.EigenSolves);

        var x1 = Vector(1); var x2 = Vector(2); var y1 = Vector(1); var y2 = Vector(2);
        long eigenBefore = sys.EigenSolves;
        sys.EigenSolve2(x1, x2);
        Assert.Equal(eigenBefore + 2, sys.EigenSolves);
        sys.EigenSolve(y1);
        sys.EigenSolve(y2);
        Assert.Equal(y1, x1);
        Assert.Equal(y2, x2);
    }

    [Fact]
    public void Eigenvalue_solves_skip_the_check_only_after_a_checked_solve_met_the_bound()
    {
        var model = StructuralModel.Create(LatticeDome.Create());
        var sys = new EquilibriumSystem(model, 1e-11);
        sys.Refactor(new double[3 * model.NodeCount]);
        int n = sys.FreeCount;
        var x = new double[n];
        for (int i = 0; i < n; i++) x[i] = Math.Sin(i + 1.0);
        var y = (double[])x.Clone();

        long checkedBefore = sys.Refined.CheckedSolves, eigenBefore = sys.EigenSolves;
        sys.EigenSolve(x); // no checked solve with this factor yet: checked
        Assert.Equal(checkedBefore + 1, sys.Refined.CheckedSolves);
        Assert.Equal(eigenBefore, sys.EigenSolves);

        var p = new double[n];
        sys.Factor.Solve(sys.ReferenceFree, p); // meets the bound: the factor is vouched for
        checkedBefore = sys.Refined.CheckedSolves;
        sys.EigenSolve(y);
        Assert.Equal(checkedBefore, sys.Refined.CheckedSolves);
        Assert.Equal(eigenBefore + 1, sys.EigenSolves);
        // The unchecked solve gives the checked one's answer here, bit for bit (no refinement acted; measured difference 0).
        double diff = 0;
        for (int i = 0; i < n; i++) diff = Math.Max(diff, Math.Abs(x[i] - y[i]) / Math.Max(1, Math.Abs(x[i])));
        Assert.True(diff == 0, $"largest difference {diff:E2}");

        sys.Refactor(new double[3 * model.NodeCount]); // a new factorisation: not vouched for again until checked
        checkedBefore = sys.Refined.CheckedSolves;
        sys.EigenSolve(y);
        Assert.Equal(checkedBefore + 1, sys.Refined.CheckedSolves);

        var strict = new EquilibriumSystem(model, 1e-11, backwardErrorBound: 0); // every checked solve "exceeds" the bound
        strict.Refactor(new double[3 * model.NodeCount]);
        strict.Factor.Solve(strict.ReferenceFree, new double[n]);
        checkedBefore = strict.Refined.CheckedSolves;
        strict.EigenSolve(new double[n].Select((_, i) => 1.0 + i % 3).ToArray());
        Assert.Equal(checkedBefore + 1, strict.Refined.CheckedSolves);
        Assert.Equal(0, strict.EigenSolves);
    }
}
