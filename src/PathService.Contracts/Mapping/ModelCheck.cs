using PathService.Engine.Model;
using Proto = PathService.Contracts.V1;

namespace PathService.Contracts.Mapping;

/// <summary>
/// CheckModel's answer, shared by the server and the CLI's in-process mode: every validation finding of the model
/// and loads, and of the controls when the model itself is valid, listed up to a cap with one warning for the rest.
/// </summary>
public static class ModelCheck
{
    public const int MaxFindings = 1000;

    public static (Proto.CheckModelResponse Response, int Errors, int Warnings) Run(Proto.CheckModelRequest request, int defaultMaxPoints, TimeSpan? maxTraceTime)
    {
        var definition = ModelMapper.ToDefinition(request.Model, request.LoadCase);
        var findings = ModelValidator.Validate(definition).ToList();
        if (request.Controls is not null && findings.All(f => f.Severity != FindingSeverity.Error))
            findings.AddRange(ControlsMapper.ToControls(request.Controls, defaultMaxPoints, maxTraceTime).Validate(StructuralModel.Create(definition)));
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
        return (response, findings.Count(f => f.Severity == FindingSeverity.Error), findings.Count(f => f.Severity == FindingSeverity.Warning));
    }
}
