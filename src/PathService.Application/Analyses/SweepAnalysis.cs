using System.Diagnostics;
using PathService.Application.Errors;
using PathService.Application.Validation;
using PathService.Contracts.Mapping;
using PathService.Contracts.V1;
using PathService.Engine.Model;
using PathService.Engine.Stability;
using SolverControls = PathService.Engine.Continuation.SolverControls;

namespace PathService.Application.Analyses;

/// <summary>
/// An imperfection sweep whose request passed every cheap check. <see cref="Run"/> shapes the imperfection (a buckling
/// analysis when it is given by modes), then yields the perfect structure's reference and one result per amplitude as
/// each trace finishes; one time limit for the whole sweep, each trace getting what is left of it.
/// </summary>
public sealed class SweepAnalysis
{
    private readonly StructuralModel _model;
    private readonly Imperfection _imperfection;
    private readonly SolverControls _controls;
    private readonly IReadOnlyList<double> _amplitudes;
    private readonly RequestChecks _checks;
    private readonly bool _exactMemory;

    internal SweepAnalysis(StructuralModel model, Imperfection imperfection, SolverControls controls, IReadOnlyList<double> amplitudes,
        RequestChecks checks, TimeSpan? timeLimit)
    {
        _model = model;
        _imperfection = imperfection;
        _controls = controls;
        _amplitudes = amplitudes;
        _checks = checks;
        _exactMemory = checks.MemoryNeedsExactEstimate(model, 0);
        TimeLimit = timeLimit;
    }

    /// <summary>Time limit of the whole sweep (null = none).</summary>
    public TimeSpan? TimeLimit { get; }

    /// <summary>Number of amplitudes swept.</summary>
    public int Amplitudes => _amplitudes.Count;

    /// <summary>The sweep's messages; <paramref name="timeLimit"/> is what is left of the caller's time, counted from the first pull.</summary>
    public IEnumerable<SweepImperfectionsResponse> Run(TimeSpan? timeLimit, CancellationToken ct)
    {
        long started = Stopwatch.GetTimestamp();
        var definition = _model.Definition;
        var (shapes, weights) = Refusals.Guard(() =>
        {
            if (_exactMemory) _checks.Memory(_model, 0, ct);
            // A buckling step that cannot shape the imperfection is an input fault with its own reason and field.
            return ImperfectionShapes.Shapes(definition, _imperfection, ct);
        });
        var limit = timeLimit is { } t && (TimeLimit is not { } own || t < own) ? t : TimeLimit;
        using var events = Refusals.Guard(() =>
            ImperfectionSweep.Run(definition, _controls, shapes, weights, _amplitudes, ct, Inputs.Remaining(limit, started)).GetEnumerator());
        while (Refusals.Guard(events.MoveNext))
        {
            var message = ResultMapper.ToSweepResponse(events.Current);
            FiniteGuard.ThrowIfNonFinite(message);
            yield return message;
        }
    }
}
