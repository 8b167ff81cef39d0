using PathService.Engine.Continuation;

namespace PathService.Engine.Tests;

/// <summary>
/// The invariant of the critical-point report: between any two consecutive points of a branch, the change of the
/// negative-pivot count equals the sum of (after − before) over the critical points reported between them, the
/// critical points chain (each starts where the previous ended), and a limit point changes the count by exactly one.
/// </summary>
internal static class InertiaAccounting
{
    /// <summary>Null when the invariant holds, else what broke it.</summary>
    public static string? Check(IReadOnlyList<PathEvent> events)
    {
        var last = new Dictionary<int, PathPoint>();
        var criticals = events.OfType<CriticalPoint>().ToList();
        foreach (var cp in criticals)
        {
            if (cp.Kind == CriticalPointKind.LimitPoint && Math.Abs(cp.NegativePivotsAfter - cp.NegativePivotsBefore) != 1)
                return $"limit point #{cp.Sequence} changes the count by {cp.NegativePivotsAfter - cp.NegativePivotsBefore}";
            if (cp.Multiplicity != Math.Abs(cp.NegativePivotsAfter - cp.NegativePivotsBefore))
                return $"critical point #{cp.Sequence}: multiplicity {cp.Multiplicity} but the count changes {cp.NegativePivotsBefore} → {cp.NegativePivotsAfter}";
        }
        foreach (var p in events.OfType<PathPoint>())
        {
            if (last.TryGetValue(p.Branch, out var q))
            {
                var between = criticals.Where(c => c.Branch == p.Branch && c.PointBefore == q.Index && c.PointAfter == p.Index).ToList();
                int sum = between.Sum(c => c.NegativePivotsAfter - c.NegativePivotsBefore);
                if (sum != p.NegativePivots - q.NegativePivots)
                    return $"branch {p.Branch}: count {q.NegativePivots} → {p.NegativePivots} between points {q.Index} and {p.Index}, critical points account for {sum}";
                int at = q.NegativePivots;
                foreach (var c in between)
                {
                    if (c.NegativePivotsBefore != at) return $"critical point #{c.Sequence} starts at {c.NegativePivotsBefore}, the count there is {at}";
                    at = c.NegativePivotsAfter;
                }
            }
            last[p.Branch] = p;
        }
        return null;
    }

    public static void AssertAccounted(IReadOnlyList<PathEvent> events)
    {
        var problem = Check(events);
        Assert.True(problem is null, problem);
    }
}
