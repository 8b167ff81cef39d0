namespace PathService.Application.Errors;

/// <summary>What kind of refusal: each adapter turns it into its own answer (a gRPC status, an exit code).</summary>
public enum RefusalKind
{
    /// <summary>The request is malformed or invalid (validation findings, a field out of range): fix the request.</summary>
    Invalid,
    /// <summary>The request is well formed but this analysis cannot be carried out on it (a mechanism, an input fault found while computing, a non-finite result).</summary>
    Unsuitable,
    /// <summary>The request is above a limit (model size, points, amplitudes, memory, file size): retrying it unchanged cannot help.</summary>
    OverLimit,
    /// <summary>The analysis reached its time limit and was stopped.</summary>
    OutOfTime,
}

/// <summary>One field at fault: its path in the request message, the reason code, the explanation and the item's id.</summary>
public sealed record FieldFault(string Field, string Reason, string Message, string? ItemId = null);

/// <summary>
/// The one error model of the application layer: every refusal of a request, whatever found it (the validator, a limit,
/// the engine while computing, the finite-value guard), carries its kind, a reason code, the request field it concerns
/// (a path such as <c>model.bars[3].area</c>; empty when none), the item id, and every field at fault. The server turns
/// it into a status with the richer error details, the CLI into an exit code and a message.
/// </summary>
public sealed class AnalysisRefusedException : Exception
{
    public AnalysisRefusedException(RefusalKind kind, string reason, string field, string message,
        IReadOnlyList<FieldFault>? faults = null, string? itemId = null, string? subject = null,
        IReadOnlyDictionary<string, string>? details = null) : base(message)
    {
        Kind = kind;
        Reason = reason;
        Field = field;
        ItemId = itemId;
        Faults = faults ?? [];
        Subject = subject;
        Details = details ?? new Dictionary<string, string>();
    }

    public RefusalKind Kind { get; }

    /// <summary>Reason code (docs/api.md, "Error reasons"); for validation, the first error finding's code; empty for a limit.</summary>
    public string Reason { get; }

    /// <summary>The request field the refusal concerns; for validation, the first error finding's field.</summary>
    public string Field { get; }

    /// <summary>The id of the item at fault (node, bar), when there is one.</summary>
    public string? ItemId { get; }

    /// <summary>Every field at fault; empty when the refusal names no single field (a mechanism, a non-finite result).</summary>
    public IReadOnlyList<FieldFault> Faults { get; }

    /// <summary>For <see cref="RefusalKind.OverLimit"/>: the limit's subject (e.g. <c>model.nodes</c>, <c>analysis_memory</c>).</summary>
    public string? Subject { get; }

    /// <summary>Further facts by name (a mechanism's <c>node</c> and <c>direction</c>).</summary>
    public IReadOnlyDictionary<string, string> Details { get; }
}
