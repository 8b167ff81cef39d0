using PathService.Application.Errors;
using PathService.Application.Validation;
using PathService.Contracts.V1;
using PathService.Ifc.Mapping;
using PathService.Ifc.Step;

namespace PathService.Application.Analyses;

/// <summary>
/// An IFC import whose request passed the cheap checks (a file is given, within the size limit). <see cref="Run"/>
/// reads and maps the file; an unreadable file is refused on <c>ifc_file</c> with the reader's code (OverLimit for a file
/// above the size limit), a bad option on the option's own field with reason <see cref="OptionReason"/>, and the model
/// read must fit the same size limits as a model sent directly.
/// </summary>
public sealed class IfcImportAnalysis
{
    /// <summary>Reason of every refusal for an option the file cannot satisfy (docs/api.md, "Error reasons").</summary>
    public const string OptionReason = "IFC_OPTION_INVALID";

    private readonly ImportIfcModelRequest _request;
    private readonly IfcImportOptions _options;
    private readonly RequestChecks _checks;

    internal IfcImportAnalysis(ImportIfcModelRequest request, IfcImportOptions options, RequestChecks checks, TimeSpan? timeLimit)
    {
        _request = request;
        _options = options;
        _checks = checks;
        TimeLimit = timeLimit;
    }

    /// <summary>The import's time limit (null = none). The reader checks no token: a caller that must not wait beyond it stops waiting.</summary>
    public TimeSpan? TimeLimit { get; }

    /// <summary>Reads the file on the calling thread; <paramref name="ct"/> is checked before reading.</summary>
    public ImportIfcModelResponse Run(CancellationToken ct)
    {
        ct.ThrowIfCancellationRequested();
        IfcImportResult result;
        try
        {
            using var stream = new MemoryStream(_request.IfcFile.Memory.ToArray(), writable: false);
            result = IfcImport.Read(stream, _options);
        }
        catch (StepFormatException ex)
        {
            throw ex.Code == "FILE_TOO_LARGE"
                ? Refusals.TooLarge("ifc_file", "ifc_file", ex.Message)
                : Refusals.InvalidField("ifc_file", ex.Code, ex.Message);
        }
        catch (IfcOptionException ex) { throw Refusals.InvalidField(FieldOf(ex.Option), OptionReason, ex.Message); }
        _checks.ModelSize(result.Model);
        var response = new ImportIfcModelResponse { Model = result.Model, LoadCase = result.LoadCase, UnitsNote = result.UnitsNote, Schema = result.Schema };
        response.Findings.AddRange(result.Findings);
        FiniteGuard.ThrowIfNonFinite(response);
        return response;
    }

    /// <summary>The request field of an option the reader names.</summary>
    internal static string FieldOf(IfcOption option) => option switch
    {
        IfcOption.ForceUnit => "units.force",
        IfcOption.LengthUnit => "units.length",
        IfcOption.AnalysisModel => "analysis_model",
        IfcOption.ReferenceLoadGroup => "reference_load_group",
        IfcOption.ConstantLoadGroup => "constant_load_group",
        _ => "ifc_file",
    };
}
