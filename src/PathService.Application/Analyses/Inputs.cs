using PathService.Application.Errors;
using PathService.Contracts.Mapping;
using PathService.Engine.Model;
using Proto = PathService.Contracts.V1;
using SolverControls = PathService.Engine.Continuation.SolverControls;

namespace PathService.Application.Analyses;

/// <summary>
/// The request's model and controls as the engine takes them, validated: the model by the engine's validator, the
/// controls always (the defaults when none are given) after the layer's policy (default point budget, time cap).
/// </summary>
internal static class Inputs
{
    /// <summary>The validated model; refuses (Invalid) with every error finding.</summary>
    public static StructuralModel Model(Proto.StructureModel? model, Proto.LoadCase? loads)
    {
        var definition = ModelMapper.ToDefinition(model, loads);
        var findings = ModelValidator.Validate(definition);
        if (findings.Any(f => f.Severity == FindingSeverity.Error)) throw Refusals.Invalid(findings);
        return Refusals.Guard(() => StructuralModel.Create(definition));
    }

    /// <summary>The engine's controls with the limits applied: the default point budget, the time cap.</summary>
    public static SolverControls ControlsOf(Proto.SolverControls? c, AnalysisLimits limits)
    {
        var controls = ControlsMapper.ToControls(c);
        if (c is not { HasMaxPoints: true }) controls = controls with { MaxPoints = limits.DefaultMaxPoints };
        if (limits.MaxAnalysisTime is { } cap && (controls.WallTimeLimit is null || controls.WallTimeLimit > cap))
            controls = controls with { WallTimeLimit = cap };
        return controls;
    }

    /// <summary>The controls, validated against the model; refuses (Invalid) with every finding.</summary>
    public static SolverControls Controls(Proto.SolverControls? c, AnalysisLimits limits, StructuralModel model)
    {
        var controls = ControlsOf(c, limits);
        var problems = controls.Validate(model);
        if (problems.Count > 0) throw Refusals.Invalid(problems);
        return controls;
    }

    /// <summary>What is left of <paramref name="limit"/> since <paramref name="started"/> (at least 1 ms); null when there is no limit.</summary>
    public static TimeSpan? Remaining(TimeSpan? limit, long started)
    {
        if (limit is not { } l) return null;
        var left = l - System.Diagnostics.Stopwatch.GetElapsedTime(started);
        return left > TimeSpan.Zero ? left : TimeSpan.FromMilliseconds(1);
    }
}
