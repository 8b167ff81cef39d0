namespace PathService.Engine;

/// <summary>
/// Base of the engine's input faults: the request was well-formed but the analysis it asks for cannot be done on this
/// structure (already unstable under the constant load, no geometric stiffness from the reference load, …). A
/// transport maps every exception of this family to a refusal naming <see cref="Field"/> and <see cref="Reason"/>,
/// never to a server fault; derive from it for a new input-dependent failure. It derives from
/// <see cref="InvalidOperationException"/> so that callers written against the earlier exception keep working.
/// </summary>
public class AnalysisInputException(string reason, string field, string message) : InvalidOperationException(message)
{
    /// <summary>Stable machine-readable reason in UPPER_SNAKE_CASE, e.g. "UNSTABLE_START".</summary>
    public string Reason { get; } = reason;

    /// <summary>Request field (path) at the origin of the fault, e.g. "load_case.reference"; "model" when it is the structure as a whole.</summary>
    public string Field { get; } = field;
}
