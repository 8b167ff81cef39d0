using PathService.Engine.Analyses;
using PathService.Engine.Continuation;
using PathService.Engine.Model;

namespace PathService.Engine.Tests.Verification;

/// <summary>
/// The two-bar truss of <see cref="TwoBarTrussTests"/> with a grounded vertical spring k at the apex. The apex
/// equilibrium becomes P = P_truss(w) + k w. Since dP_truss/dw = (EA/L0³)(3w² − 6hw + 2h²) has its minimum −EAh²/L0³ at
/// w = h, any k > EAh²/L0³ makes the load rise monotonically: no limit point, and load control alone follows the path.
/// Closed form derived in docs/theory.md (our own derivation of the Total Lagrangian two-bar truss).
/// </summary>
public class SpringStiffenedTrussTests
{
    private const double B = 4.0, H = 0.35, EA = 2.4e5, PRef = 10.0;
    private static readonly double L0 = Math.Sqrt(B * B + H * H);
    private static double Truss(double w) => EA / (L0 * L0 * L0) * w * (w - H) * (w - 2 * H);

    [Fact]
    public void Load_control_converges_on_the_closed_form_with_a_stiff_apex_spring()
    {
        double kMin = EA * H * H / (L0 * L0 * L0);
        double k = 1.5 * kMin;
        var model = StructuralModel.Create(TestModels.TwoBarTruss(B, H, EA, PRef, apexSpring: k));
        var apex = new DofReference("apex", Axis.Y);
        var controls = new SolverControls
        {
            Method = ContinuationMethod.LoadControl, InitialLoadIncrement = 0.5, TargetLoadFactor = 80,
            Monitored = [apex], ResidualTolerance = 1e-12, MaxPoints = 500,
        };
        var events = new PathTracer(model, controls).Trace().ToList();
        var summary = Assert.IsType<PathSummary>(events[^1]);
        Assert.Equal(StopReason.TargetLoadFactorReached, summary.Reason);
        Assert.Equal(80.0, summary.FinalLoadFactor, 12);
        Assert.Empty(events.OfType<CriticalPoint>());
        var points = events.OfType<PathPoint>().ToList();
        // The path passes the region where the bare truss would snap (w beyond 2h at λ = 80).
        Assert.True(-points[^1].Monitored[0] > 2 * H, $"final w {-points[^1].Monitored[0]}");
        foreach (var p in points)
        {
            double w = -p.Monitored[0];
            double expected = Truss(w) + k * w;
            Assert.True(Math.Abs(p.LoadFactor * PRef - expected) <= 1e-8 * Math.Max(1, Math.Abs(expected)),
                $"λP = {p.LoadFactor * PRef}, closed form {expected}");
            Assert.Equal(Continuation.Stability.Stable, p.Stability);
        }
    }

    /// <summary>
    /// Linearised buckling of the bare truss (derived in docs/theory.md): K0 = 2EAh²/L0³ at the apex; the linear bar stress per
    /// unit apex load is S = −L0/(2Ah), so K_σ = 2SA/L0 = −1/h per unit load and μ_cr P = 2EAh³/L0³, which is 3√3 ≈ 5.2 times
    /// the true limit load 2EAh³/(3√3 L0³): the classical estimate is unsafe for shallow snapping structures.
    /// </summary>
    [Fact]
    public void Linearised_buckling_of_the_two_bar_truss_overestimates_the_limit_load_by_three_root_three()
    {
        var model = StructuralModel.Create(TestModels.TwoBarTruss(B, H, EA, PRef));
        var result = LinearBucklingAnalysis.Run(model, modeCount: 1);
        double expected = 2 * EA * H * H * H / (L0 * L0 * L0) / PRef;
        Assert.Equal(expected, result.Modes[0].LoadFactor, 1e-9 * expected);
        double limit = 2 * EA * H * H * H / (3 * Math.Sqrt(3) * L0 * L0 * L0) / PRef;
        Assert.Equal(3 * Math.Sqrt(3), result.Modes[0].LoadFactor / limit, 1e-9);
    }
}
