using PathService.Application.Validation;
using PathService.Contracts.Mapping;
using PathService.Contracts.V1;
using PathService.Engine.Analyses;
using PathService.Engine.Model;

namespace PathService.Application.Analyses;

/// <summary>A linear static analysis whose request passed every cheap check; <see cref="Run"/> solves it.</summary>
public sealed class LinearAnalysis
{
    private readonly StructuralModel _model;
    private readonly double _loadFactor;
    private readonly RequestChecks _checks;
    private readonly bool _exactMemory;

    internal LinearAnalysis(StructuralModel model, double loadFactor, RequestChecks checks, TimeSpan? timeLimit)
    {
        _model = model;
        _loadFactor = loadFactor;
        _checks = checks;
        _exactMemory = checks.MemoryNeedsExactEstimate(model, 0);
        TimeLimit = timeLimit;
    }

    /// <summary>The analysis's time limit (null = none).</summary>
    public TimeSpan? TimeLimit { get; }

    /// <summary>Solves on the calling thread; <paramref name="timeLimit"/> is what is left of the caller's time (null = <see cref="TimeLimit"/>).</summary>
    public AnalyzeLinearResponse Run(TimeSpan? timeLimit, CancellationToken ct) =>
        TimeBound.Run(timeLimit ?? TimeLimit, TimeLimit, ct, token =>
        {
            if (_exactMemory) _checks.Memory(_model, 0, token);
            var result = LinearStaticAnalysis.Run(_model, _loadFactor, cancellationToken: token);
            var response = new AnalyzeLinearResponse
            {
                LoadFactor = result.LoadFactor,
                State = new ResultMapper(_model, []).ToState(result.Displacements, result.BarForces, null, result.Reactions, result.BeamEndForces),
                Units = ModelMapper.ToUnits(_model.Units),
            };
            response.Warnings.AddRange(_model.Warnings.Select(ResultMapper.ToFinding));
            response.SlackBars.AddRange(result.SlackBars);
            FiniteGuard.ThrowIfNonFinite(response);
            return response;
        });
}
