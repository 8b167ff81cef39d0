using PathService.Client.Calls;
using PathService.Contracts.V1;

namespace PathService.Client.Tests;

/// <summary>The check of a restarted trace's replay: every message, points bit for bit, and a replay that ends early.</summary>
public class ReplayCheckTests
{
    private static TracePathResponse Point(int index, double lambda, double w) => new()
    {
        Point = new PathPoint
        {
            Index = index, LoadFactor = lambda, ArcLength = 0.1 * index, NegativePivots = 0,
            Monitored = { new MonitoredDisplacement { Node = "ridge", Direction = Direction.Y, Value = w } },
        },
    };

    private static TracePathResponse Cut(int step, string detail) => new() { StepCut = new StepCut { Step = step, Detail = detail } };

    [Fact]
    public void Identical_replayed_messages_pass_and_end_the_replay()
    {
        var delivered = new[] { Point(0, 0, 0), Cut(1, "no convergence"), Point(1, 0.5, -0.01) };
        var check = new ReplayCheck(delivered, delivered.Length);
        check.Compare(Point(0, 0, 0));
        check.Compare(Cut(1, "no convergence"));
        Assert.True(check.Active);
        check.Compare(Point(1, 0.5, -0.01));
        Assert.False(check.Active);
        check.CompleteOrThrow();
    }

    [Fact]
    public void A_replayed_point_that_differs_in_the_last_bit_fails_loudly()
    {
        var check = new ReplayCheck([Point(0, 0, 0), Point(1, 0.5, -0.01)], 2);
        check.Compare(Point(0, 0, 0));
        var ex = Assert.Throws<ReplayMismatchException>(() => check.Compare(Point(1, Math.BitIncrement(0.5), -0.01)));
        Assert.Equal(1, ex.PointIndex);
        Assert.Contains("point 1: load factor 0.5000000000000001, previously 0.5", ex.Message);
    }

    [Fact]
    public void A_replayed_monitored_value_that_differs_fails_loudly()
    {
        var check = new ReplayCheck([Point(0, 0, 0)], 1);
        var ex = Assert.Throws<ReplayMismatchException>(() => check.Compare(Point(0, 0, -1e-300)));
        Assert.Contains("monitored value 1 (ridge) is -1E-300, previously 0", ex.Message);
    }

    [Fact]
    public void A_replayed_point_that_differs_only_in_its_arc_length_fails_naming_the_field()
    {
        var check = new ReplayCheck([Point(2, 0.7, -0.02)], 1);
        var changed = Point(2, 0.7, -0.02);
        changed.Point.ArcLength = Math.BitDecrement(changed.Point.ArcLength);
        var ex = Assert.Throws<ReplayMismatchException>(() => check.Compare(changed));
        Assert.Contains("arc_length", ex.Detail);
    }

    [Fact]
    public void A_replayed_step_cut_that_differs_fails_naming_the_message_and_field()
    {
        var check = new ReplayCheck([Point(0, 0, 0), Cut(1, "no convergence")], 2);
        check.Compare(Point(0, 0, 0));
        var ex = Assert.Throws<ReplayMismatchException>(() => check.Compare(Cut(1, "residual grew")));
        Assert.Equal(0, ex.PointIndex); // the last point before the message that differs
        Assert.Contains("message 2 (StepCut): step_cut.detail is residual grew, previously no convergence", ex.Message);
    }

    [Fact]
    public void A_replay_with_another_kind_of_message_in_place_fails()
    {
        var check = new ReplayCheck([Point(0, 0, 0), Cut(1, "x")], 2);
        check.Compare(Point(0, 0, 0));
        var ex = Assert.Throws<ReplayMismatchException>(() => check.Compare(Point(1, 0.5, 0)));
        Assert.Contains("message 2: a Point came where a StepCut was received", ex.Message);
    }

    [Fact]
    public void A_restarted_trace_that_ends_before_repeating_everything_fails()
    {
        var check = new ReplayCheck([Point(0, 0, 0), Point(1, 0.5, -0.01)], 2);
        check.Compare(Point(0, 0, 0));
        var ex = Assert.Throws<ReplayMismatchException>(check.CompleteOrThrow);
        Assert.Contains("ended after 1 messages, but 2 had already been received", ex.Message);
    }

    [Fact]
    public void The_full_state_of_a_point_is_not_part_of_the_comparison()
    {
        var withState = Point(0, 0, 0);
        withState.Point.State = new StructureState();
        var check = new ReplayCheck([ReplayCheck.Light(withState)], 1);
        Assert.Null(ReplayCheck.Light(withState).Point.State);
        check.Compare(withState);
        Assert.False(check.Active);
    }
}
