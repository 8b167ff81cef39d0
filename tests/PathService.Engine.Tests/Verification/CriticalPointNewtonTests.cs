using PathService.Bench.Models;
using PathService.Engine.Continuation;
using PathService.Engine.Model;

namespace PathService.Engine.Tests.Verification;

/// <summary>
/// Location by Newton's method on the crossing eigenvalue (docs/theory.md §4.1): few factorisations per located point
/// on a limit point and on a bifurcation with closed forms, and the fallback (regula falsi or bisection) taken where the
/// eigenvalue nearest zero at a bracket end is a soft mode that does not cross, with every point still located.
/// </summary>
public class CriticalPointNewtonTests
{
    private readonly Xunit.Abstractions.ITestOutputHelper _out;
    public CriticalPointNewtonTests(Xunit.Abstractions.ITestOutputHelper output) => _out = output;

    private static List<PathEvent> Trace(ModelDefinition def, SolverControls c) => new PathTracer(StructuralModel.Create(def), c).Trace().ToList();

    private void Report(string name, PathSummary s, IReadOnlyList<CriticalPoint> cps, double error) =>
        _out.WriteLine($"{name}: {cps.Count} points, {s.CriticalPointFactorizations} factorisations, {s.CriticalPointTrials} trials ({s.CriticalPointNewtonTrials} Newton), error {error:E2}");

    [Fact]
    public void Limit_points_of_the_two_bar_truss_are_located_by_newton_in_at_most_five_factorisations_each()
    {
        // Truss B = 4, H = 0.35, EA = 2.4e5, P_ref = 10: limit at P = 2EAH³/(3√3 L0³) (our derivation, docs/theory.md §6.1).
        const double b = 4.0, h = 0.35, ea = 2.4e5, pRef = 10.0;
        double l0 = Math.Sqrt(b * b + h * h);
        double exact = 2 * ea * h * h * h / (3 * Math.Sqrt(3) * l0 * l0 * l0) / pRef;
        var events = Trace(TestModels.TwoBarTruss(b, h, ea, pRef), new SolverControls { InitialLoadIncrement = 0.3 * exact, MaxPoints = 12 });
        var summary = Assert.IsType<PathSummary>(events[^1]);
        var cps = events.OfType<CriticalPoint>().ToList();
        var cp = cps[0];
        double error = Math.Abs(cp.LoadFactor - exact) / exact;
        Report("two-bar truss", summary, cps, error);
        Assert.All(cps, c => Assert.True(c.Located, c.LocationNote));
        Assert.Equal(CriticalPointKind.LimitPoint, cp.Kind);
        Assert.True(cp.Located, cp.LocationNote);
        Assert.True(error <= 1e-9, $"λ_cr = {cp.LoadFactor:R}, closed form {exact:R}");
        Assert.True(summary.CriticalPointNewtonTrials >= 1);
        // Measured 9 for the two limit points: where λ turns, a trial's λ error is ½|λ''|δt², so Newton's steps meet the
        // tolerance early but the chord's fold test and the tighter trial solves of a limit point cost one or two more.
        Assert.True(summary.CriticalPointFactorizations <= 5 * cps.Count, $"{summary.CriticalPointFactorizations} factorisations for {cps.Count} points");
    }

    [Fact]
    public void Bifurcation_of_the_spring_held_post_is_located_by_newton_in_at_most_three_factorisations()
    {
        // P_cr = kL0·√(1 − 2kL0/EA) (our derivation, docs/theory.md §6.2). Measured: one factorisation (one Newton trial
        // from the step's end, then the correction along the path tangent), error 1.3e-11.
        const double l = 3.0, ea = 5.0e4, k = 40.0, pRef = 10.0;
        double exact = k * l * Math.Sqrt(1 - 2 * k * l / ea) / pRef;
        var events = Trace(TestModels.SpringHeldPost(l, ea, k, pRef), new SolverControls { InitialLoadIncrement = 1.0, TargetLoadFactor = 15, MaxPoints = 200 });
        var summary = Assert.IsType<PathSummary>(events[^1]);
        var cp = Assert.Single(events.OfType<CriticalPoint>());
        double error = Math.Abs(cp.LoadFactor - exact) / exact;
        Report("spring-held post", summary, [cp], error);
        Assert.Equal(CriticalPointKind.Bifurcation, cp.Kind);
        Assert.True(cp.Located, cp.LocationNote);
        Assert.True(error <= 1e-9, $"λ_cr = {cp.LoadFactor:R}, closed form {exact:R}");
        Assert.True(summary.CriticalPointNewtonTrials >= 1);
        Assert.True(summary.CriticalPointFactorizations <= 3, $"{summary.CriticalPointFactorizations} factorisations");
    }

    [Fact]
    public void Fallback_is_taken_on_the_roof_and_every_point_is_still_located_within_seven_factorisations_each()
    {
        // Double-layer roof m = 12 (the bench's roof, small): a soft mode nearer zero than the crossing one at some
        // bracket ends sends Newton's point out of the bracket, so some trials come from bisection or regula falsi.
        var events = Trace(SpaceTrussRoof.Create(12), new SolverControls { InitialLoadIncrement = 0.5, MaxPoints = 60 });
        var summary = Assert.IsType<PathSummary>(events[^1]);
        var cps = events.OfType<CriticalPoint>().ToList();
        Report("roof m = 12", summary, cps, 0);
        Assert.NotEmpty(cps);
        Assert.All(cps, c => Assert.True(c.Located, c.LocationNote));
        Assert.True(summary.CriticalPointTrials > summary.CriticalPointNewtonTrials, $"{summary.CriticalPointTrials} trials, all Newton");
        Assert.True(summary.CriticalPointNewtonTrials > 0);
        // Measured 25 for its 4 points (16 trials, 11 of them Newton's; two limit points and two double bifurcations).
        Assert.True(summary.CriticalPointFactorizations <= 7 * cps.Count, $"{summary.CriticalPointFactorizations} factorisations for {cps.Count} points");
        InertiaAccounting.AssertAccounted(events);
    }
}
