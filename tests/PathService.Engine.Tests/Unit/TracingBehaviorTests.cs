using PathService.Engine.Continuation;
using PathService.Engine.Model;
using PathService.Engine.Tests.Fixtures;

namespace PathService.Engine.Tests.Unit;

/// <summary>How the tracer behaves as a stream: lazy, cancellable, never leaking a NaN.</summary>
public class TracingBehaviorTests
{
    private static StructuralModel Dome() => StructuralModel.Create(LatticeDome.Create(rise: 1.5, perRing: 10, loadedRings: 0));

    [Fact]
    public void Points_are_yielded_one_by_one_as_they_converge()
    {
        // Pulling one event at a time must not run the whole trace: the summary's factorisation count grows with pulls.
        using var e = new PathTracer(Dome(), new SolverControls { InitialLoadIncrement = 1.0, MaxPoints = 50 }).Trace().GetEnumerator();
        Assert.True(e.MoveNext());
        var first = Assert.IsType<PathPoint>(e.Current);
        Assert.Equal(0, first.Index);
        Assert.True(e.MoveNext());
        Assert.Equal(1, Assert.IsType<PathPoint>(e.Current).Index);
    }

    [Fact]
    public void Cancellation_ends_the_trace_with_a_cancelled_summary()
    {
        using var cts = new CancellationTokenSource();
        var events = new List<PathEvent>();
        foreach (var ev in new PathTracer(Dome(), new SolverControls { InitialLoadIncrement = 1.0, MaxPoints = 10_000 }).Trace(cts.Token))
        {
            events.Add(ev);
            if (ev is PathPoint { Index: 3 }) cts.Cancel();
        }
        var summary = Assert.IsType<PathSummary>(events[^1]);
        Assert.Equal(StopReason.Cancelled, summary.Reason);
        Assert.False(summary.Completed);
        Assert.Equal(3, events.OfType<PathPoint>().Max(p => p.Index));
    }

    [Fact]
    public void Wall_time_limit_stops_the_trace()
    {
        var events = new PathTracer(Dome(), new SolverControls { InitialLoadIncrement = 0.01, MaxPoints = 1_000_000, MaxIncrementRatio = 1, WallTimeLimit = TimeSpan.FromMilliseconds(200) }).Trace().ToList();
        Assert.Equal(StopReason.WallTimeExceeded, Assert.IsType<PathSummary>(events[^1]).Reason);
    }

    [Fact]
    public void A_hopeless_step_is_cut_and_reported_without_any_NaN()
    {
        // Tolerance unreachable in two iterations with a huge first increment: every attempt is cut, then the trace stops.
        var controls = new SolverControls
        {
            Method = ContinuationMethod.LoadControl, InitialLoadIncrement = 1e6, MaxIterations = 2, ResidualTolerance = 1e-14,
            MaxCutsPerStep = 4, Monitored = [new DofReference("crown", Axis.Z)],
        };
        var events = new PathTracer(Dome(), controls).Trace().ToList();
        var summary = Assert.IsType<PathSummary>(events[^1]);
        Assert.Equal(StopReason.Diverged, summary.Reason);
        Assert.Equal(5, events.OfType<StepCut>().Count());
        Assert.Equal(5, summary.Cuts);
        foreach (var p in events.OfType<PathPoint>())
            Assert.True(double.IsFinite(p.LoadFactor) && p.Monitored.All(double.IsFinite) && double.IsFinite(p.ResidualNorm));
        foreach (var c in events.OfType<StepCut>())
            Assert.True(double.IsFinite(c.ResidualNorm) || c.Reason == CutReason.NonFiniteValue);
        Assert.True(double.IsFinite(summary.FinalLoadFactor) && double.IsFinite(summary.MaxLoadFactor));
    }

    [Fact]
    public void Full_state_is_attached_only_where_asked()
    {
        var events = new PathTracer(Dome(), new SolverControls { InitialLoadIncrement = 1.0, MaxPoints = 12, FullStateEvery = 5 }).Trace().ToList();
        var withState = events.OfType<PathPoint>().Where(p => p.State is not null).Select(p => p.Index).ToList();
        Assert.Equal([0, 5, 10, 11], withState);
        var state = events.OfType<PathPoint>().Last().State!;
        Assert.Equal(31 * 3, state.Displacements.Length);
        Assert.Equal(70, state.BarForces.Length);
    }

    [Fact]
    public void Reactions_balance_the_applied_load()
    {
        var last = new PathTracer(Dome(), new SolverControls { InitialLoadIncrement = 1.0, MaxPoints = 8 }).Trace().OfType<PathPoint>().Last();
        double sumZ = 0;
        for (int n = 0; n < last.State!.Reactions.Length / 3; n++) sumZ += last.State.Reactions[3 * n + 2];
        // Σ reactions + λ·Σ F_ref = 0 in z (the crown load is −1 per unit λ).
        Assert.Equal(last.LoadFactor, sumZ, 1e-8 * Math.Max(1, Math.Abs(last.LoadFactor)));
    }
}
