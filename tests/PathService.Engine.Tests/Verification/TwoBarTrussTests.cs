using PathService.Engine.Continuation;
using PathService.Engine.Model;

namespace PathService.Engine.Tests.Verification;

/// <summary>
/// The symmetric shallow two-bar truss (von Mises truss), a classic worked example of the nonlinear finite-element
/// literature (e.g. M. A. Crisfield, "Non-linear Finite Element Analysis of Solids and Structures", Vol. 1, 1991, §3.1 (from memory);
/// our own dimensions below).
///
/// Closed form of the Total Lagrangian solution (derived in docs/theory.md): with half-span b, rise h, L0² = b² + h²
/// and apex deflection w (downward), each bar's chord is (b, h − w), so ε = ((h−w)² − h²)/(2L0²) = w(w − 2h)/(2L0²).
/// The vertical internal force of the two bars at the apex is 2·A·Eε·(h − w)/L0, which balances the downward load P:
///     P(w) = (EA/L0³) · w (w − h)(w − 2h).
/// dP/dw = 0 at w = h(1 ∓ 1/√3), where P = ±2EAh³/(3√3 L0³): the upper and the lower limit point.
/// </summary>
public class TwoBarTrussTests
{
    private const double B = 4.0, H = 0.35, EA = 2.4e5, PRef = 10.0;
    private static readonly double L0 = Math.Sqrt(B * B + H * H);
    private static double ClosedForm(double w) => EA / (L0 * L0 * L0) * w * (w - H) * (w - 2 * H);
    private static readonly double PLimit = 2 * EA * H * H * H / (3 * Math.Sqrt(3) * L0 * L0 * L0);

    private static List<PathEvent> TraceArcLength(double residualTolerance = 1e-12)
    {
        var model = StructuralModel.Create(TestModels.TwoBarTruss(B, H, EA, PRef));
        var controls = new SolverControls
        {
            Method = ContinuationMethod.ArcLength,
            InitialLoadIncrement = 0.5,
            ResidualTolerance = residualTolerance,
            Monitored = [new DofReference("apex", Axis.Y)],
            TargetDisplacementDof = new DofReference("apex", Axis.Y),
            TargetDisplacement = -2.3 * H,
            MaxPoints = 400,
            CriticalPointTolerance = 1e-10,
        };
        return new PathTracer(model, controls).Trace().ToList();
    }

    [Fact]
    public void Arc_length_path_matches_the_closed_form_through_both_limit_points()
    {
        var events = TraceArcLength();
        var points = events.OfType<PathPoint>().ToList();
        var summary = Assert.IsType<PathSummary>(events[^1]);
        Assert.Equal(StopReason.TargetDisplacementReached, summary.Reason);
        Assert.True(points.Count > 15, $"only {points.Count} points");
        // The path must actually go through the snap: past w = 2h, where P is positive again.
        Assert.True(-points[^1].Monitored[0] > 2 * H);
        Assert.Contains(points, p => p.LoadFactor < -0.9 * PLimit / PRef);
        foreach (var p in points)
        {
            double w = -p.Monitored[0];
            // Relative to the limit load, since P(w) passes through zero; the residual tolerance is 1e-12.
            double error = Math.Abs(p.LoadFactor * PRef - ClosedForm(w)) / PLimit;
            Assert.True(error < 1e-6, $"point {p.Index}: w = {w}, λP = {p.LoadFactor * PRef}, closed form {ClosedForm(w)}, rel. error {error:E2}");
        }
    }

    [Fact]
    public void Both_limit_points_are_found_located_and_classified()
    {
        var criticals = TraceArcLength().OfType<CriticalPoint>().ToList();
        Assert.Equal(2, criticals.Count);
        Assert.All(criticals, c => Assert.Equal(CriticalPointKind.LimitPoint, c.Kind));
        Assert.All(criticals, c => Assert.True(c.Located));
        double a = 1 / Math.Sqrt(3);
        // Upper limit point: w = h(1 − 1/√3), P = +P_lim; lower: w = h(1 + 1/√3), P = −P_lim.
        Assert.Equal(PLimit / PRef, criticals[0].LoadFactor, 1e-6 * PLimit / PRef);
        Assert.Equal(-PLimit / PRef, criticals[1].LoadFactor, 1e-6 * PLimit / PRef);
        Assert.Equal(H * (1 - a), -criticals[0].Monitored[0], 1e-4 * H);
        Assert.Equal(H * (1 + a), -criticals[1].Monitored[0], 1e-4 * H);
        Assert.Equal((0, 1), (criticals[0].NegativePivotsBefore, criticals[0].NegativePivotsAfter));
        Assert.Equal((1, 0), (criticals[1].NegativePivotsBefore, criticals[1].NegativePivotsAfter));
        Assert.All(criticals, c => Assert.True(c.LoadAlignment > 0.99));
    }

    [Fact]
    public void Points_between_the_limit_points_are_unstable_and_the_rest_stable()
    {
        double a = 1 / Math.Sqrt(3);
        foreach (var p in TraceArcLength().OfType<PathPoint>())
        {
            double w = -p.Monitored[0];
            if (Math.Abs(w - H * (1 - a)) < 1e-3 * H || Math.Abs(w - H * (1 + a)) < 1e-3 * H) continue;
            bool between = w > H * (1 - a) && w < H * (1 + a);
            Assert.Equal(between ? Continuation.Stability.Unstable : Continuation.Stability.Stable, p.Stability);
        }
    }

    [Fact]
    public void Load_control_stops_at_the_limit_point_with_a_clear_reason()
    {
        var model = StructuralModel.Create(TestModels.TwoBarTruss(B, H, EA, PRef));
        var controls = new SolverControls { Method = ContinuationMethod.LoadControl, InitialLoadIncrement = 0.25, TargetLoadFactor = 10, MaxCutsPerStep = 6 };
        var events = new PathTracer(model, controls).Trace().ToList();
        var summary = Assert.IsType<PathSummary>(events[^1]);
        Assert.Equal(StopReason.Diverged, summary.Reason);
        Assert.Contains("arc-length", summary.Message);
        Assert.True(summary.MaxLoadFactor < PLimit / PRef && summary.MaxLoadFactor > 0.9 * PLimit / PRef);
        Assert.Contains(events, e => e is StepCut);
        Assert.All(events.OfType<PathPoint>(), p => Assert.True(double.IsFinite(p.LoadFactor) && double.IsFinite(p.ResidualNorm)));
    }

    [Fact]
    public void Displacement_control_follows_the_closed_form_through_the_limit_points()
    {
        var model = StructuralModel.Create(TestModels.TwoBarTruss(B, H, EA, PRef));
        var apex = new DofReference("apex", Axis.Y);
        var controls = new SolverControls
        {
            Method = ContinuationMethod.DisplacementControl, ControlDof = apex, InitialDisplacementIncrement = -0.02,
            TargetDisplacement = -2.2 * H, Monitored = [apex], MaxPoints = 500, ResidualTolerance = 1e-12,
        };
        var events = new PathTracer(model, controls).Trace().ToList();
        Assert.Equal(StopReason.TargetDisplacementReached, Assert.IsType<PathSummary>(events[^1]).Reason);
        var points = events.OfType<PathPoint>().ToList();
        Assert.Equal(-2.2 * H, points[^1].Monitored[0], 1e-12);
        foreach (var p in points)
            Assert.True(Math.Abs(p.LoadFactor * PRef - ClosedForm(-p.Monitored[0])) < 1e-6 * PLimit);
        Assert.Equal(2, events.OfType<CriticalPoint>().Count());
    }
}

/// <summary>Modified Newton (tangent of the last converged point kept through the step) reaches the same path.</summary>
public class ModifiedNewtonTests
{
    [Fact]
    public void Modified_Newton_traces_the_same_limit_points_with_fewer_factorisations_per_iteration()
    {
        var def = Fixtures.LatticeDome.Create(rise: 1.5, perRing: 10, loadedRings: 0);
        SolverControls Controls(bool modified) => new()
        {
            InitialLoadIncrement = 1.0, MaxPoints = 30, ModifiedNewton = modified, MaxIterations = modified ? 200 : 25,
            ResidualTolerance = 1e-10, CriticalPointTolerance = 1e-10,
        };
        var full = new PathTracer(StructuralModel.Create(def), Controls(false)).Trace().ToList();
        var modified = new PathTracer(StructuralModel.Create(def), Controls(true)).Trace().ToList();
        var a = full.OfType<CriticalPoint>().First();
        var b = modified.OfType<CriticalPoint>().First();
        Assert.Equal(a.Kind, b.Kind);
        Assert.Equal(a.LoadFactor, b.LoadFactor, 1e-7 * Math.Abs(a.LoadFactor));
        var sf = Assert.IsType<PathSummary>(full[^1]);
        var sm = Assert.IsType<PathSummary>(modified[^1]);
        Assert.True((double)sm.Factorizations / sm.Iterations < (double)sf.Factorizations / sf.Iterations,
            $"modified {sm.Factorizations}/{sm.Iterations}, full {sf.Factorizations}/{sf.Iterations}");
    }
}
