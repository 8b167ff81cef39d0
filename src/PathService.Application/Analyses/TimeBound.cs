using PathService.Application.Errors;

namespace PathService.Application.Analyses;

/// <summary>
/// Runs an analysis that has no time limit of its own in the engine (linear, buckling) under one: a token that the
/// caller's token and the time limit both cancel; stopped by the limit, it is refused as <see cref="RefusalKind.OutOfTime"/>.
/// </summary>
internal static class TimeBound
{
    public static T Run<T>(TimeSpan? limit, TimeSpan? nominal, CancellationToken ct, Func<CancellationToken, T> work)
    {
        // Timers take at most about 49 days; a longer limit is no limit in practice.
        if (limit is not { } l || l >= TimeSpan.FromDays(40)) return Refusals.Guard(() => work(ct));
        using var timer = new CancellationTokenSource(l > TimeSpan.Zero ? l : TimeSpan.FromMilliseconds(1));
        using var linked = CancellationTokenSource.CreateLinkedTokenSource(ct, timer.Token);
        try { return Refusals.Guard(() => work(linked.Token)); }
        catch (OperationCanceledException) when (timer.IsCancellationRequested && !ct.IsCancellationRequested)
        {
            throw Refusals.OutOfTime("the analysis", nominal ?? l);
        }
    }
}
