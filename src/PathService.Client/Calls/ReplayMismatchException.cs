namespace PathService.Client.Calls;

/// <summary>
/// A trace restarted on another instance did not repeat what was already received: a replayed message differs (points
/// bit for bit, every other message field by field), or the restarted stream ended before repeating them all. The
/// service is deterministic (bit-identical results for the same request), so this means two instances run different
/// versions or settings: the combined path would be wrong, and the call fails instead of mixing them.
/// </summary>
public sealed class ReplayMismatchException(int pointIndex, string detail)
    : Exception($"the restarted trace differs from what was already received ({detail}); the instances disagree, so the path is not combined")
{
    /// <summary>Index of the point that differs, or of the last point before the message that differs (-1: none).</summary>
    public int PointIndex { get; } = pointIndex;

    /// <summary>What differs, e.g. "point 3: load factor 0.5000000000000001, previously 0.5".</summary>
    public string Detail { get; } = detail;
}
