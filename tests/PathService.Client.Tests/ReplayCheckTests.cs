using PathService.Client.Calls;
using PathService.Contracts.V1;

namespace PathService.Client.Tests;

public class ReplayCheckTests
{
    private static PathPoint Point(int index, double lambda, double w) => new()
    {
        Index = index, LoadFactor = lambda, ArcLength = 0.1 * index, NegativePivots = 0,
        Monitored = { new MonitoredDisplacement { Node = "ridge", Direction = Direction.Y, Value = w } },
    };

    [Fact]
    public void Identical_replayed_points_pass_and_end_the_replay()
    {
        var delivered = new[] { Point(0, 0, 0), Point(1, 0.5, -0.01) };
        var check = new ReplayCheck(delivered, delivered.Length);
        check.Compare(Point(0, 0, 0));
        Assert.True(check.Active);
        check.Compare(Point(1, 0.5, -0.01));
        Assert.False(check.Active);
    }

    [Fact]
    public void A_replayed_point_that_differs_in_the_last_bit_fails_loudly()
    {
        var check = new ReplayCheck([Point(0, 0, 0), Point(1, 0.5, -0.01)], 2);
        check.Compare(Point(0, 0, 0));
        var ex = Assert.Throws<ReplayMismatchException>(() => check.Compare(Point(1, Math.BitIncrement(0.5), -0.01)));
        Assert.Equal(1, ex.PointIndex);
        Assert.Contains("load factor", ex.Message);
    }

    [Fact]
    public void A_replayed_monitored_value_that_differs_fails_loudly()
    {
        var check = new ReplayCheck([Point(0, 0, 0)], 1);
        var ex = Assert.Throws<ReplayMismatchException>(() => check.Compare(Point(0, 0, -1e-300)));
        Assert.Contains("monitored", ex.Message);
    }
}
