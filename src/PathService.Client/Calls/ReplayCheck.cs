using PathService.Contracts.V1;

namespace PathService.Client.Calls;

/// <summary>
/// Compares the points a restarted trace replays with those delivered before, in order, bit for bit (load factor, arc
/// length, monitored values, negative pivots). Active until the first <c>count</c> delivered points (those delivered
/// before the restart) have been replayed.
/// </summary>
internal sealed class ReplayCheck(IReadOnlyList<PathPoint> delivered, int count)
{
    private int _next;

    public bool Active => _next < count;

    public void Compare(PathPoint replayed)
    {
        var before = delivered[_next];
        if (replayed.Index != before.Index)
            throw new ReplayMismatchException(before.Index, $"point {replayed.Index} came where point {before.Index} was expected");
        if (BitConverter.DoubleToInt64Bits(replayed.LoadFactor) != BitConverter.DoubleToInt64Bits(before.LoadFactor))
            throw new ReplayMismatchException(before.Index, $"load factor {replayed.LoadFactor:R} instead of {before.LoadFactor:R}");
        if (BitConverter.DoubleToInt64Bits(replayed.ArcLength) != BitConverter.DoubleToInt64Bits(before.ArcLength))
            throw new ReplayMismatchException(before.Index, $"arc length {replayed.ArcLength:R} instead of {before.ArcLength:R}");
        if (replayed.NegativePivots != before.NegativePivots)
            throw new ReplayMismatchException(before.Index, $"{replayed.NegativePivots} negative pivots instead of {before.NegativePivots}");
        if (!replayed.Monitored.Equals(before.Monitored))
            throw new ReplayMismatchException(before.Index, "monitored displacements differ");
        _next++;
    }
}
