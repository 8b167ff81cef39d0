using PathService.Engine.Continuation;
using PathService.Engine.Model;
using PathService.Engine.Stability;

namespace PathService.Engine.Tests.Verification;

/// <summary>
/// Imperfection sensitivity of the spring-held post (an unstable symmetric bifurcation, see
/// <see cref="BranchSwitchingTests"/>). With the top moved sideways by x₀ the bar starts tilted (L₀ = √(L² + x₀²)).
/// Equilibrium of the top at (x, y) = ℓ(sin θ, cos θ): −k(x − x₀) − N x/ℓ = 0 and −P − N y/ℓ = 0, so
///     P(θ) = k(ℓ sin θ − x₀)·cos θ / sin θ,   ℓ² = L₀² − 2kL₀³(ℓ sin θ − x₀)/(EA ℓ sin θ),
/// and the imperfect post snaps at the maximum of P(θ): a limit point below the perfect bifurcation load, falling as
/// x₀ grows (Koiter's knock-down; J. W. Hutchinson and W. T. Koiter, Appl. Mech. Rev. 23, 1970; rigid-bar form in
/// Z. P. Bažant and L. Cedolin, "Stability of Structures", 1991, §1.1 (from memory)). Our derivation for the extensible bar.
/// </summary>
public class KnockDownTests
{
    private const double L = 3.0, EA = 5.0e4, K = 40.0, PRef = 10.0;

    private static double ClosedFormLimit(double x0)
    {
        double l0 = Math.Sqrt(L * L + x0 * x0);
        double P(double theta)
        {
            double ell = l0;
            for (int i = 0; i < 60; i++) ell = Math.Sqrt(l0 * l0 - 2 * K * l0 * l0 * l0 * (ell * Math.Sin(theta) - x0) / (EA * ell * Math.Sin(theta)));
            return K * (ell * Math.Sin(theta) - x0) * Math.Cos(theta) / Math.Sin(theta);
        }
        // Golden-section search for the maximum on (θ₀, 0.8).
        double a = Math.Atan2(x0, L), b = 0.8, g = (Math.Sqrt(5) - 1) / 2;
        for (int i = 0; i < 200; i++)
        {
            double c = b - g * (b - a), d = a + g * (b - a);
            if (P(c) > P(d)) b = d; else a = c;
        }
        return P(0.5 * (a + b));
    }

    [Fact]
    public void Knock_down_curve_matches_the_closed_form_and_meets_the_perfect_load_at_small_amplitude()
    {
        var perfect = TestModels.SpringHeldPost(L, EA, K, PRef);
        var sway = new double[6];
        sway[3] = 1.0; // top, x
        double[] amplitudes = [1e-4 * L, 1e-3 * L, 3e-3 * L, 1e-2 * L];
        var controls = new SolverControls { InitialLoadIncrement = 1.0, MaxPoints = 400, ResidualTolerance = 1e-12 };
        var events = ImperfectionSweep.Run(perfect, controls, [sway], [1.0], amplitudes).ToList();

        var reference = Assert.IsType<SweepReference>(events[0]);
        Assert.Equal(CriticalPointKind.Bifurcation, reference.Kind);
        double perfectLoad = K * L * Math.Sqrt(1 - 2 * K * L / EA) / PRef;
        Assert.Equal(perfectLoad, reference.CriticalLoadFactor!.Value, 1e-7 * perfectLoad);

        var results = events.OfType<SweepResult>().ToList();
        Assert.Equal(amplitudes.Length, results.Count);
        foreach (var r in results)
        {
            Assert.Equal(CriticalPointKind.LimitPoint, r.Kind);
            double expected = ClosedFormLimit(r.Amplitude) / PRef;
            Assert.True(Math.Abs(r.CriticalLoadFactor!.Value - expected) <= 1e-6 * expected, $"x₀ = {r.Amplitude}: λ = {r.CriticalLoadFactor}, closed form {expected}");
        }
        // The small-amplitude end meets the perfect bifurcation load (within 0.5 % at x₀ = L/10⁴); knock-down grows with x₀.
        Assert.Equal(1.0, results[0].KnockDown!.Value, 5e-3);
        for (int i = 1; i < results.Count; i++) Assert.True(results[i].KnockDown < results[i - 1].KnockDown);
        Assert.True(results[^1].KnockDown < 0.95); // 0.931 by the closed form at x₀ = L/100
    }
}
