using System.Diagnostics;
using PathService.Application.Errors;
using PathService.Application.Validation;
using PathService.Contracts.Mapping;
using PathService.Contracts.V1;
using PathService.Engine.Continuation;
using PathService.Engine.Model;
using PathSummary = PathService.Engine.Continuation.PathSummary;
using SolverControls = PathService.Engine.Continuation.SolverControls;

namespace PathService.Application.Analyses;

/// <summary>
/// A trace whose request passed every cheap check (sizes, point budget, model, controls, the imperfection's fields, the
/// cheap memory bound). <see cref="Run"/> does the rest lazily, on the thread that pulls it: the exact memory estimate
/// when the cheap bound was too high, the shaping of the imperfection (a buckling analysis of the perfect model when it
/// is given by modes), then the engine's events, each mapped to its message, checked for non-finite numbers, and
/// yielded as soon as it exists. Every input fault is an <see cref="AnalysisRefusedException"/>.
/// </summary>
public sealed class TraceAnalysis
{
    private readonly StructuralModel _perfect;
    private readonly Imperfection? _imperfection;
    private readonly SolverControls _controls;
    private readonly RequestChecks _checks;
    private readonly bool _exactMemory;

    internal TraceAnalysis(StructuralModel perfect, Imperfection? imperfection, SolverControls controls, RequestChecks checks, string fingerprint)
    {
        _perfect = perfect;
        _imperfection = imperfection;
        _controls = controls;
        _checks = checks;
        _exactMemory = checks.MemoryNeedsExactEstimate(perfect, 0);
        Fingerprint = fingerprint;
    }

    /// <summary>The trace's wall-time limit: the caller's, capped by the limits (null = none).</summary>
    public TimeSpan? TimeLimit => _controls.WallTimeLimit;

    /// <summary>SHA-256 of the request; set on the summary.</summary>
    public string Fingerprint { get; }

    /// <summary>Whether <see cref="Run"/> does heavy work before the first event (exact memory estimate, shaping by buckling modes).</summary>
    public bool HeavyPreparation => _exactMemory || _imperfection is not null;

    /// <summary>The stop reason as the engine names it (e.g. TargetLoadFactorReached), once the summary was yielded.</summary>
    public string? Outcome { get; private set; }

    /// <summary>The summary message, once yielded.</summary>
    public Contracts.V1.PathSummary? Summary { get; private set; }

    /// <summary>
    /// The trace's messages. <paramref name="timeLimit"/> is what is left of the time the caller allows (e.g. the server's
    /// remaining time bound); counted from the first pull, preparation included, and never more than
    /// <see cref="TimeLimit"/>. Once <paramref name="ct"/> is cancelled only the summary is still yielded: whatever the
    /// engine yields while being stopped may have been cut short, and a restarted trace must repeat the stream exactly.
    /// </summary>
    public IEnumerable<TracePathResponse> Run(TimeSpan? timeLimit, CancellationToken ct)
    {
        long started = Stopwatch.GetTimestamp();
        var model = Refusals.Guard(() => Prepare(ct));
        var controls = _controls;
        if (Inputs.Remaining(timeLimit, started) is { } left && (controls.WallTimeLimit is not { } own || left < own))
            controls = controls with { WallTimeLimit = left };
        var mapper = new ResultMapper(model, controls.Monitored);
        using var events = Refusals.Guard(() => new PathTracer(model, controls).Trace(ct).GetEnumerator());
        while (Refusals.Guard(events.MoveNext))
        {
            var e = events.Current;
            if (ct.IsCancellationRequested && e is not PathSummary) continue;
            var message = mapper.ToResponse(e);
            FiniteGuard.ThrowIfNonFinite(message);
            if (message.Summary is { } summary)
            {
                summary.Fingerprint = Fingerprint;
                summary.EngineVersion = AnalysisApplication.EngineVersion;
                Summary = summary;
                Outcome = ((PathSummary)e).Reason.ToString();
            }
            yield return message;
        }
    }

    private StructuralModel Prepare(CancellationToken ct)
    {
        if (_exactMemory) _checks.Memory(_perfect, 0, ct);
        if (_imperfection is null) return _perfect;
        return StructuralModel.Create(ImperfectionShapes.Apply(_perfect.Definition, _imperfection, ct));
    }
}
