namespace PathService.Client.Calls;

/// <summary>
/// A trace restarted on another instance replayed a point that differs from the one already received. The service is
/// deterministic (bit-identical results for the same request), so this means two instances run different versions or
/// settings: the combined path would be wrong, and the call fails instead of mixing them.
/// </summary>
public sealed class ReplayMismatchException(int pointIndex, string detail)
    : Exception($"the restarted trace replayed point {pointIndex} differently ({detail}); the instances disagree, so the path is not combined")
{
    public int PointIndex { get; } = pointIndex;
}
