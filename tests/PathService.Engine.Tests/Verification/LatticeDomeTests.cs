using PathService.Engine.Continuation;
using PathService.Engine.Model;
using PathService.Engine.Tests.Fixtures;

namespace PathService.Engine.Tests.Verification;

/// <summary>
/// A larger shallow lattice dome (our own, 31 nodes, 70 bars, 63 free DOFs, loaded at the crown) whose arc-length path passes several
/// limit points and local bifurcations. Checks are internal-consistency checks of the stability bookkeeping
/// (Sylvester's law of inertia: the number of negative pivots equals the number of negative eigenvalues, so it can
/// only change where an eigenvalue passes zero), plus an independent check of the first limit point by load control.
/// </summary>
public class LatticeDomeTests
{
    private static readonly DofReference Crown = new("crown", Axis.Z);

    private static List<PathEvent> Trace() => new PathTracer(
        StructuralModel.Create(LatticeDome.Create(rise: 1.5, perRing: 10, loadedRings: 0)),
        new SolverControls { InitialLoadIncrement = 1.0, Monitored = [Crown], MaxPoints = 200 }).Trace().ToList();

    [Fact]
    public void Path_passes_several_limit_points_with_a_consistent_inertia_count()
    {
        var events = Trace();
        var criticals = events.OfType<CriticalPoint>().ToList();
        var limits = criticals.Where(c => c.Kind == CriticalPointKind.LimitPoint).ToList();
        Assert.True(limits.Count >= 3, $"only {limits.Count} limit points");
        Assert.All(limits, c => Assert.True(c.Located));

        // The count of negative pivots only changes across reported critical points, which chain from the count at the
        // step's start to the count at its end (one step may hold several, e.g. a bifurcation just before a limit
        // point); every point's stability flag follows its count.
        var points = events.OfType<PathPoint>().ToList();
        Assert.Equal(Enumerable.Range(0, points.Count), points.Select(p => p.Index));
        foreach (var c in criticals) Assert.Equal(c.PointBefore + 1, c.PointAfter);
        InertiaAccounting.AssertAccounted(events);
        for (int i = 1; i < points.Count; i++)
            if (points[i].NegativePivots != points[i - 1].NegativePivots)
                Assert.Contains(criticals, c => c.PointAfter == i);
        Assert.All(points, q => Assert.Equal(q.NegativePivots == 0 ? Continuation.Stability.Stable : Continuation.Stability.Unstable, q.Stability));

        // A limit point is an extremum of λ along the path: its λ lies beyond both bracketing points' λ.
        foreach (var c in limits)
        {
            bool maximum = c.LoadFactor >= Math.Max(c.LoadFactorBefore, c.LoadFactorAfter) - 1e-9 * Math.Abs(c.LoadFactor);
            bool minimum = c.LoadFactor <= Math.Min(c.LoadFactorBefore, c.LoadFactorAfter) + 1e-9 * Math.Abs(c.LoadFactor);
            Assert.True(maximum || minimum, $"limit point at λ = {c.LoadFactor} is not an extremum of [{c.LoadFactorBefore}, {c.LoadFactorAfter}]");
        }
        // Traced beyond the first limit point.
        Assert.Contains(points, p => p.Index > limits[0].PointAfter + 5);
    }

    [Fact]
    public void Load_control_stops_just_below_the_first_limit_point_found_by_arc_length()
    {
        double firstLimit = Trace().OfType<CriticalPoint>().First(c => c.Kind == CriticalPointKind.LimitPoint).LoadFactor;
        var lc = new PathTracer(StructuralModel.Create(LatticeDome.Create(rise: 1.5, perRing: 10, loadedRings: 0)),
            new SolverControls { Method = ContinuationMethod.LoadControl, InitialLoadIncrement = 1.0, TargetLoadFactor = 2 * firstLimit, MaxPoints = 400, DetectCriticalPoints = false })
            .Trace().ToList();
        var summary = Assert.IsType<PathSummary>(lc[^1]);
        Assert.Equal(StopReason.Diverged, summary.Reason);
        Assert.True(summary.MaxLoadFactor <= firstLimit * (1 + 1e-9), $"load control reached {summary.MaxLoadFactor} > {firstLimit}");
        Assert.True(summary.MaxLoadFactor >= firstLimit * (1 - 1e-3), $"load control stopped at {summary.MaxLoadFactor}, well below {firstLimit}");
    }
}
