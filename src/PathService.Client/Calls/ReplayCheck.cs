using PathService.Contracts.V1;

namespace PathService.Client.Calls;

/// <summary>
/// Compares what a restarted trace replays with what was delivered before, message by message and in order: a point
/// bit for bit in every field but its full state (index, load factor, arc length, monitored values, pivots, ...), any
/// other message (step cut, critical point, member event, ...) field by field with doubles compared bit for bit. Active
/// until the first <c>count</c> delivered messages have been replayed.
/// </summary>
internal sealed class ReplayCheck(IReadOnlyList<TracePathResponse> delivered, int count)
{
    private int _next;
    private int _lastPoint = -1;

    public bool Active => _next < count;

    /// <summary>How many of the delivered messages have been replayed so far.</summary>
    public int Replayed => _next;

    /// <summary>
    /// The form in which a delivered message is remembered: a copy (the caller may change what it was given), without
    /// a point's (possibly large) full state.
    /// </summary>
    public static TracePathResponse Light(TracePathResponse r)
    {
        if (r.UpdateCase != TracePathResponse.UpdateOneofCase.Point || r.Point.State is null) return r.Clone();
        var state = r.Point.State;
        r.Point.State = null; // clone without copying the state, then give it back
        var copy = r.Clone();
        r.Point.State = state;
        return copy;
    }

    public void Compare(TracePathResponse replayed)
    {
        var before = delivered[_next];
        int position = _next + 1;
        if (replayed.UpdateCase != before.UpdateCase)
            throw new ReplayMismatchException(_lastPoint, $"message {position}: a {replayed.UpdateCase} came where a {before.UpdateCase} was received");
        var light = Light(replayed);
        if (!light.Equals(before)) // generated Equals compares doubles bit for bit
        {
            if (before.UpdateCase == TracePathResponse.UpdateOneofCase.Point)
                throw new ReplayMismatchException(before.Point.Index, PointDifference(light.Point, before.Point));
            throw new ReplayMismatchException(_lastPoint,
                $"message {position} ({before.UpdateCase}): {MessageDiff.First(light, before) ?? "the message differs"}");
        }
        if (before.UpdateCase == TracePathResponse.UpdateOneofCase.Point) _lastPoint = before.Point.Index;
        _next++;
    }

    /// <summary>Throws when the restarted stream ended before it had repeated everything received before.</summary>
    public void CompleteOrThrow()
    {
        if (Active)
            throw new ReplayMismatchException(_lastPoint,
                $"the restarted trace ended after {_next} messages, but {count} had already been received");
    }

    private static string PointDifference(PathPoint now, PathPoint before)
    {
        if (now.Index != before.Index) return $"point {now.Index} came where point {before.Index} was expected";
        if (BitConverter.DoubleToInt64Bits(now.LoadFactor) != BitConverter.DoubleToInt64Bits(before.LoadFactor))
            return $"point {before.Index}: load factor {now.LoadFactor:R}, previously {before.LoadFactor:R}";
        if (now.Monitored.Count == before.Monitored.Count)
            for (int i = 0; i < now.Monitored.Count; i++)
                if (!now.Monitored[i].Equals(before.Monitored[i]))
                    return $"point {before.Index}: monitored value {i + 1} ({before.Monitored[i].Node}) is {now.Monitored[i].Value:R}, previously {before.Monitored[i].Value:R}";
        return $"point {before.Index}: {MessageDiff.First(now, before) ?? "the point differs"}";
    }
}
