using PathService.Contracts.Mapping;
using PathService.Engine;
using PathService.Engine.Model;

namespace PathService.Application.Errors;

/// <summary>
/// Builds the refusals of the application layer, and translates the engine's input faults into them: validation
/// findings (<see cref="ModelValidationException"/>), a mechanism (<see cref="MechanismException"/>) and any input fault
/// found while computing (<see cref="AnalysisInputException"/>).
/// </summary>
public static class Refusals
{
    /// <summary>Invalid: one fault per error finding (warnings are left out), field paths as the request spells them.</summary>
    public static AnalysisRefusedException Invalid(IEnumerable<ValidationFinding> findings)
    {
        var errors = findings.Where(f => f.Severity == FindingSeverity.Error).ToList();
        var faults = errors.Select(f => new FieldFault(FieldPaths.ToRequestPath(f.FieldPath), FieldPaths.CodeName(f.Code), Describe(f), f.ItemId)).ToList();
        string first = errors.Count > 0 ? Describe(errors[0]) : "the request is invalid";
        string message = errors.Count > 1 ? $"{first} (and {errors.Count - 1} more)" : first;
        return faults.Count == 0
            ? new(RefusalKind.Invalid, "", "", message)
            : new(RefusalKind.Invalid, faults[0].Reason, faults[0].Field, message, faults, faults[0].ItemId);
    }

    /// <summary>Invalid: one request field the engine does not see (e.g. mode_count), with its reason code.</summary>
    public static AnalysisRefusedException InvalidField(string field, string reason, string message) =>
        new(RefusalKind.Invalid, reason, field, message, [new FieldFault(field, reason, message)]);

    /// <summary>Unsuitable: the structure is a mechanism at the start; names the node and the free direction.</summary>
    public static AnalysisRefusedException Mechanism(MechanismException ex) =>
        new(RefusalKind.Unsuitable, "MECHANISM", "model", ex.Message, itemId: ex.NodeId,
            details: new Dictionary<string, string> { ["node"] = ex.NodeId, ["direction"] = ex.Direction.ToString().ToLowerInvariant() });

    /// <summary>Unsuitable: an input fault the engine found while computing, with its reason and field.</summary>
    public static AnalysisRefusedException Input(AnalysisInputException ex) =>
        new(RefusalKind.Unsuitable, ex.Reason, ex.Field, ex.Message, [new FieldFault(ex.Field, ex.Reason, ex.Message)]);

    /// <summary>Unsuitable: a result of a well-formed model is not finite (its numbers overflow double precision).</summary>
    public static AnalysisRefusedException NonFinite(string where) =>
        new(RefusalKind.Unsuitable, "NON_FINITE_RESULT", where,
            $"the analysis produced a non-finite value ({where}); the model's magnitudes (moduli, areas, loads, coordinates) overflow double precision");

    /// <summary>OverLimit: the request is above a limit; <paramref name="subject"/> names the limit.</summary>
    public static AnalysisRefusedException TooLarge(string field, string subject, string message) =>
        new(RefusalKind.OverLimit, "", field, message, [new FieldFault(field, "", message)], subject: subject);

    /// <summary>OutOfTime: the analysis reached its time limit and was stopped.</summary>
    public static AnalysisRefusedException OutOfTime(string what, TimeSpan limit) =>
        new(RefusalKind.OutOfTime, "TIME_LIMIT_EXCEEDED", "", $"{what} exceeded its time limit of {limit.TotalSeconds:G4} s and was stopped");

    /// <summary>The refusal an engine exception stands for; null when it is not an input fault (a genuine failure).</summary>
    public static AnalysisRefusedException? From(Exception ex) => ex switch
    {
        AnalysisRefusedException r => r,
        ModelValidationException v => Invalid(v.Findings),
        MechanismException m => Mechanism(m),
        AnalysisInputException a => Input(a),
        _ => null,
    };

    /// <summary>Runs <paramref name="work"/>, turning the engine's input faults into refusals.</summary>
    public static T Guard<T>(Func<T> work)
    {
        try { return work(); }
        catch (Exception ex) when (ex is not AnalysisRefusedException && From(ex) is { } refusal) { throw refusal; }
    }

    private static string Describe(ValidationFinding f) =>
        f.ItemId is { Length: > 0 } id && !f.Message.Contains(id, StringComparison.Ordinal) ? $"{f.Message} ('{Cut(id)}')" : f.Message;

    private static string Cut(string s) => s.Length <= 64 ? s : s[..64] + "…";
}
