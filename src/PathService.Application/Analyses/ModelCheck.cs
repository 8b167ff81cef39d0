using PathService.Contracts.Mapping;
using PathService.Engine.Model;
using Proto = PathService.Contracts.V1;

namespace PathService.Application.Analyses;

/// <summary>
/// CheckModel's answer: every validation finding of the model and loads, and of the controls (the defaults when none
/// are given, under the same limits as a trace) when the model itself is valid, listed up to a cap with one warning
/// for the rest.
/// </summary>
internal static class ModelCheck
{
    public const int MaxFindings = 1000;

    public static Proto.CheckModelResponse Run(Proto.CheckModelRequest request, AnalysisLimits limits)
    {
        var definition = ModelMapper.ToDefinition(request.Model, request.LoadCase);
        var findings = ModelValidator.Validate(definition).ToList();
        if (findings.All(f => f.Severity != FindingSeverity.Error))
            findings.AddRange(Inputs.ControlsOf(request.Controls, limits).Validate(StructuralModel.Create(definition)));
        var response = new Proto.CheckModelResponse
        {
            Valid = findings.All(f => f.Severity != FindingSeverity.Error),
            Units = ModelMapper.ToUnits(definition.Units),
        };
        // Bounded: a model of many duplicated entries has a finding per entry; past the cap one warning gives the count.
        response.Findings.AddRange(findings.Take(MaxFindings).Select(ResultMapper.ToFinding));
        if (findings.Count > MaxFindings)
            response.Findings.Add(new Proto.Finding
            {
                Severity = Proto.FindingSeverity.Warning, Code = "FINDINGS_TRUNCATED", Field = "model",
                Message = $"{findings.Count - MaxFindings} more findings are not listed ({findings.Count} in all); fix the ones above and check again",
            });
        return response;
    }
}
