using PathService.Engine.Continuation;
using PathService.Engine.Model;

namespace PathService.Engine.Stability;

/// <summary>One item of a knock-down sweep.</summary>
public abstract record SweepEvent;

/// <summary>The perfect structure's first critical point: the reference the knock-down is measured against.</summary>
public sealed record SweepReference(double? CriticalLoadFactor, CriticalPointKind? Kind, StopReason Reason, string Message) : SweepEvent;

/// <summary>The first critical point of the structure with one imperfection amplitude (null when none was reached).</summary>
public sealed record SweepResult(int Index, double Amplitude, double? CriticalLoadFactor, CriticalPointKind? Kind, double? KnockDown,
    StopReason Reason, string Message, int Points) : SweepEvent;

/// <summary>
/// Imperfection sensitivity in one call: traces the perfect structure and then, for each amplitude, the structure
/// with that imperfection to its first critical point, and yields each result as it is found. The curve of the
/// critical load factor against amplitude is the knock-down curve (W. T. Koiter, 1945; J. W. Hutchinson and
/// W. T. Koiter, "Postbuckling theory", Appl. Mech. Rev. 23, 1970).
/// </summary>
public static class ImperfectionSweep
{
    /// <param name="timeLimit">
    /// Wall time of the whole sweep (null = none). Each trace gets what is left of it as its wall-time limit (or its own
    /// smaller limit), so the trace running when the time is up ends with <see cref="StopReason.WallTimeExceeded"/>;
    /// the amplitudes not yet traced are then reported with that reason and no points, without being traced.
    /// </param>
    public static IEnumerable<SweepEvent> Run(ModelDefinition perfect, SolverControls controls, IReadOnlyList<double[]> shapes,
        IReadOnlyList<double> weights, IReadOnlyList<double> amplitudes, CancellationToken ct = default, TimeSpan? timeLimit = null)
    {
        if (amplitudes.Count == 0) throw new ArgumentException("give at least one imperfection amplitude", nameof(amplitudes));
        var clock = System.Diagnostics.Stopwatch.StartNew();
        var first = controls with { StopAtFirstCriticalPoint = true, DetectCriticalPoints = true, SwitchBranches = false, FullStateEvery = 0, FullStateAtEnd = false, FullStateAtCriticalPoints = false };
        // Controls of the next trace: its own wall-time limit or what is left of the sweep's, whichever is smaller (null: time is up).
        SolverControls? Next()
        {
            if (timeLimit is not { } limit) return first;
            var left = limit - clock.Elapsed;
            if (left <= TimeSpan.Zero) return null;
            return first with { WallTimeLimit = first.WallTimeLimit is { } own && own < left ? own : left };
        }
        double? reference = null;
        var refControls = Next() ?? first with { WallTimeLimit = TimeSpan.FromMilliseconds(1) };
        var (refLambda, refKind, refSummary) = FirstCritical(StructuralModel.Create(perfect), refControls, ct);
        reference = refLambda;
        yield return new SweepReference(refLambda, refKind, refSummary.Reason, refSummary.Message);
        for (int i = 0; i < amplitudes.Count && !ct.IsCancellationRequested; i++)
        {
            if (Next() is not { } traceControls)
            {
                yield return new SweepResult(i, amplitudes[i], null, null, null, StopReason.WallTimeExceeded,
                    $"not traced: the sweep's time limit of {timeLimit!.Value.TotalSeconds:G3} s was reached", 0);
                continue;
            }
            var model = StructuralModel.Create(Imperfections.Apply(perfect, shapes, weights, amplitudes[i]));
            var (lambda, kind, summary) = FirstCritical(model, traceControls, ct);
            yield return new SweepResult(i, amplitudes[i], lambda, kind, lambda is { } l && reference is { } r && r != 0 ? l / r : null,
                summary.Reason, summary.Message, summary.Points);
        }
    }

    private static (double?, CriticalPointKind?, PathSummary) FirstCritical(StructuralModel model, SolverControls controls, CancellationToken ct)
    {
        CriticalPoint? cp = null;
        PathSummary? summary = null;
        foreach (var e in new PathTracer(model, controls).Trace(ct))
        {
            if (e is CriticalPoint c) cp ??= c;
            if (e is PathSummary s) summary = s;
        }
        return (cp?.LoadFactor, cp?.Kind, summary!);
    }
}
