using Grpc.Core;
using PathService.Contracts.V1;
using PathService.Ifc.Step;
using PathService.Server.Errors;

namespace PathService.Server.Services;

/// <summary>
/// Translation of the IFC reader's exceptions into statuses: an unreadable file is INVALID_ARGUMENT on
/// <c>ifc_file</c> with the reader's code as the reason (RESOURCE_EXHAUSTED for a file above the size limit); a bad
/// option is INVALID_ARGUMENT on the option's own field.
/// </summary>
internal static class IfcImportErrors
{
    /// <summary>Reason of every field violation for an option the file cannot satisfy (docs/api.md, "Error reasons").</summary>
    public const string OptionReason = "IFC_OPTION_INVALID";

    public static RpcException FromFormat(StepFormatException ex) =>
        ex.Code == "FILE_TOO_LARGE"
            ? RpcErrors.TooLarge("ifc_file", "ifc_file", ex.Message)
            : RpcErrors.InvalidField("ifc_file", ex.Code, LogText.Cut(ex.Message, 400));

    public static RpcException FromOption(ArgumentException ex, ImportIfcModelRequest request) =>
        RpcErrors.InvalidField(OptionField(ex.Message, request), OptionReason, LogText.Cut(ex.Message, 400));

    /// <summary>
    /// The request field an option fault concerns. The reader names the option in its message (it throws
    /// ArgumentException with the parameter "options" for all of them), so the field is chosen from that wording.
    /// </summary>
    public static string OptionField(string message, ImportIfcModelRequest request)
    {
        if (message.StartsWith("force unit", StringComparison.Ordinal)) return "units.force";
        if (message.StartsWith("length unit", StringComparison.Ordinal)) return "units.length";
        if (message.Contains("IfcStructuralAnalysisModel", StringComparison.Ordinal) || message.Contains("analysis models", StringComparison.Ordinal))
            return "analysis_model";
        if (message.Contains("asked as the reference", StringComparison.Ordinal)) return "reference_load_group";
        if (message.Contains("asked as the constant", StringComparison.Ordinal) || message.Contains("the constant and the reference", StringComparison.Ordinal))
            return "constant_load_group";
        // "N load groups match 'key'": the field whose value is quoted.
        if (request.ConstantLoadGroup.Length > 0 && message.Contains($"'{request.ConstantLoadGroup}'", StringComparison.Ordinal)
            && !(request.ReferenceLoadGroup.Length > 0 && message.Contains($"'{request.ReferenceLoadGroup}'", StringComparison.Ordinal)))
            return "constant_load_group";
        return request.ReferenceLoadGroup.Length > 0 ? "reference_load_group" : "ifc_file";
    }
}
