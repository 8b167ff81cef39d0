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
}
