using PathService.Engine.Continuation;
using PathService.Engine.Model;

namespace PathService.Engine.Tests.Verification;

/// <summary>
/// Secondary branch of the spring-held post (see <see cref="SpringHeldPostTests"/>). Rigid-bar theory gives
/// P = kL·cos θ for a bar of length L tilted by θ with a horizontal spring at its top (Z. P. Bažant and L. Cedolin,
/// "Stability of Structures", 1991, §1.1 (from memory)). For the extensible Total Lagrangian bar, horizontal equilibrium of the top,
/// −k x − N x/ℓ = 0, gives N = −kℓ on the whole secondary branch, so the current length is the constant
/// ℓ = L·√(1 − 2kL/EA) found at the bifurcation, and vertical equilibrium gives P(θ) = kℓ·cos θ exactly
/// (our derivation, docs/theory.md).
/// </summary>
public class BranchSwitchingTests
{
    private const double L = 3.0, EA = 5.0e4, K = 40.0, PRef = 10.0;

    [Fact]
    public void Secondary_branch_follows_P_equals_k_l_cos_theta()
    {
        var model = StructuralModel.Create(TestModels.SpringHeldPost(L, EA, K, PRef));
        var controls = new SolverControls
        {
            InitialLoadIncrement = 1.0, TargetLoadFactor = 14, MaxPoints = 200, ResidualTolerance = 1e-12,
            Monitored = [new DofReference("top", Axis.X), new DofReference("top", Axis.Y)],
            SwitchBranches = true, SecondaryBranchPoints = 25, MaxIncrementRatio = 500,
        };
        var events = new PathTracer(model, controls).Trace().ToList();
        var started = Assert.Single(events.OfType<BranchStarted>());
        Assert.Equal(1, started.Branch);
        Assert.Single(events.OfType<BranchEnded>());
        var secondary = events.OfType<PathPoint>().Where(p => p.Branch == 1).ToList();
        Assert.Equal(25, secondary.Count);
        double ell = L * Math.Sqrt(1 - 2 * K * L / EA);
        double maxTheta = 0;
        foreach (var p in secondary)
        {
            double x = p.Monitored[0], y = L + p.Monitored[1];
            double theta = Math.Atan2(x, y);
            maxTheta = Math.Max(maxTheta, Math.Abs(theta));
            Assert.Equal(ell, Math.Sqrt(x * x + y * y), 1e-9 * ell);
            double expected = K * ell * Math.Cos(theta);
            Assert.True(Math.Abs(p.LoadFactor * PRef - expected) <= 1e-4 * expected, $"θ = {theta}: λP = {p.LoadFactor * PRef}, closed form {expected}");
        }
        // The branch is really followed away from the bifurcation, not just touched.
        Assert.True(maxTheta > 0.2, $"largest tilt only {maxTheta} rad");
        // The primary path resumes after the secondary branch and reaches its target.
        Assert.Contains(events.OfType<PathPoint>(), p => p.Branch == 0 && p.LoadFactor > 13);
        Assert.Equal(2, Assert.IsType<PathSummary>(events[^1]).Branches);
    }
}
