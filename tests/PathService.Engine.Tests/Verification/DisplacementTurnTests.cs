using PathService.Engine.Continuation;
using PathService.Engine.Model;

namespace PathService.Engine.Tests.Verification;

/// <summary>
/// Snap-back of the load point of the two-bar truss loaded through a soft link spring k_s
/// (<see cref="TestModels.TwoBarTrussThroughSpring"/>). With the truss's closed form P(w) = (EA/L0³)·w(w − h)(w − 2h)
/// (<see cref="TwoBarTrussTests"/>), the load-point deflection is v = w + P(w)/k_s, which turns back where
/// dP/dw = −k_s: 3w² − 6hw + 2h² + k_s L0³/EA = 0, i.e. w = h ∓ √((h² − k_s L0³/EA)/3) (our derivation, docs/theory.md).
/// </summary>
public class DisplacementTurnTests
{
    private const double B = 4.0, H = 0.35, EA = 2.4e5, PRef = 10.0, Ks = 200.0;

    [Fact]
    public void Load_point_turns_back_twice_at_the_closed_form_deflections()
    {
        double l0 = Math.Sqrt(B * B + H * H), c = EA / (l0 * l0 * l0);
        double P(double w) => c * w * (w - H) * (w - 2 * H);
        double root = Math.Sqrt((H * H - Ks / c) / 3);
        double[] w = [H - root, H + root];
        var events = new PathTracer(StructuralModel.Create(TestModels.TwoBarTrussThroughSpring(B, H, EA, PRef, Ks)), new SolverControls
        {
            InitialLoadIncrement = 0.2, MaxPoints = 400,
            Monitored = [new DofReference("cap", Axis.Y), new DofReference("apex", Axis.Y)],
            TargetDisplacementDof = new DofReference("apex", Axis.Y), TargetDisplacement = -2.3 * H,
        }).Trace().ToList();
        var turns = events.OfType<DisplacementTurn>().Where(t => t.MonitoredIndex == 0).ToList();
        Assert.Equal(2, turns.Count);
        Assert.DoesNotContain(events.OfType<DisplacementTurn>(), t => t.MonitoredIndex == 1); // the apex itself never turns
        for (int i = 0; i < 2; i++)
        {
            double v = w[i] + P(w[i]) / Ks, lambda = P(w[i]) / PRef;
            // Refined on the path by parabolic interpolation: measured v within 2e-9 and λ within 1.1e-5 (relative); v is
            // flat at its extreme, so λ there is the less sharply determined of the two.
            Assert.True(Math.Abs(-turns[i].Value - v) <= 2e-8 * v, $"turn {i}: v = {-turns[i].Value}, closed form {v}");
            Assert.True(Math.Abs(turns[i].LoadFactor - lambda) <= 1e-4 * Math.Abs(lambda), $"turn {i}: λ = {turns[i].LoadFactor}, closed form {lambda}");
            Assert.True(turns[i].PointBefore < turns[i].PointAfter);
        }
        Assert.Equal([1, 2], turns.Select(t => t.Sequence));
    }
}
