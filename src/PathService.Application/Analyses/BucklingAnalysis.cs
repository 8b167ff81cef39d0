using PathService.Application.Errors;
using PathService.Application.Validation;
using PathService.Contracts.Mapping;
using PathService.Contracts.V1;
using PathService.Engine.Analyses;
using PathService.Engine.Model;

namespace PathService.Application.Analyses;

/// <summary>A linearised buckling analysis whose request passed every cheap check; <see cref="Run"/> finds the modes.</summary>
public sealed class BucklingAnalysis
{
    private readonly StructuralModel _model;
    private readonly int _count;
    private readonly int _extraVectors;
    private readonly RequestChecks _checks;
    private readonly bool _exactMemory;

    internal BucklingAnalysis(StructuralModel model, int count, RequestChecks checks, TimeSpan? timeLimit)
    {
        _model = model;
        _count = count;
        _checks = checks;
        // The subspace iteration keeps four dense blocks of q = max(2p, p + 8) vectors, plus the two matrices.
        _extraVectors = 4 * Math.Max(2 * count, count + 8);
        _exactMemory = checks.MemoryNeedsExactEstimate(model, _extraVectors);
        TimeLimit = timeLimit;
    }

    /// <summary>The analysis's time limit (null = none).</summary>
    public TimeSpan? TimeLimit { get; }

    /// <summary>Finds the modes on the calling thread; <paramref name="timeLimit"/> is what is left of the caller's time (null = <see cref="TimeLimit"/>).</summary>
    public FindBucklingModesResponse Run(TimeSpan? timeLimit, CancellationToken ct) =>
        TimeBound.Run(timeLimit ?? TimeLimit, TimeLimit, ct, token =>
        {
            if (_exactMemory) _checks.Memory(_model, _extraVectors, token);
            LinearBucklingResult result;
            try { result = LinearBucklingAnalysis.Run(_model, _count, ct: token); }
            catch (ArgumentOutOfRangeException ex) { throw Refusals.InvalidField("mode_count", "MODE_COUNT_OUT_OF_RANGE", ex.Message); }
            var mapper = new ResultMapper(_model, []);
            var response = new FindBucklingModesResponse { Iterations = result.Iterations, Converged = result.Converged, Units = ModelMapper.ToUnits(_model.Units) };
            response.Modes.AddRange(result.Modes.Select(mapper.ToMode));
            FiniteGuard.ThrowIfNonFinite(response);
            return response;
        });
}
