namespace PathService.Engine.Model;

/// <summary>How serious a finding is: errors stop the analysis, warnings are reported alongside results.</summary>
public enum FindingSeverity { Error, Warning }

/// <summary>Machine-readable kind of a validation finding (stable across versions; clients may switch on it).</summary>
public enum FindingCode
{
    MissingId,
    DuplicateId,
    UnknownNode,
    NonFiniteNumber,
    /// <summary>A model value beyond ±<see cref="ModelValidator.MaxMagnitude"/> (1e15): almost always a unit mistake.</summary>
    MagnitudeBeyondLimit,
    ZeroLengthBar,
    SameNodeAtBothEnds,
    NonPositiveStiffness,
    NonPositiveArea,
    NoReferenceLoad,
    UnconnectedNode,
    DuplicateSupport,
    EmptyModel,
    LoadOnRestrainedDirection,
    CoincidentNodes,
    InvalidDirection,
    NegativeDensity,
    UnknownLoadSet,
    /// <summary>A member-check property out of range: negative yield stress or second moment, non-positive effective-length factor.</summary>
    MemberPropertyOutOfRange,
    /// <summary>Warning: a load set asks for self-weight but no bar has a density, so it adds no weight.</summary>
    SelfWeightWithoutDensity,
    /// <summary>An enum number outside the contract (continuation method, arc-length constraint, bar behavior).</summary>
    UnknownOption,
    /// <summary>A solver control outside its documented range.</summary>
    ControlOutOfRange,
    /// <summary>A solver control that the chosen method or another control needs is not given.</summary>
    ControlMissing,
    /// <summary>Solver controls that contradict each other, the chosen method or the model.</summary>
    ControlConflict,
    /// <summary>An imperfection with neither buckling modes nor an explicit shape.</summary>
    ImperfectionShapeMissing,
    /// <summary>An imperfection buckling-mode number outside 1..20 or beyond the modes the model has.</summary>
    ImperfectionModeOutOfRange,
    /// <summary>Imperfection weights whose count differs from the number of shapes.</summary>
    ImperfectionWeightsMismatch,
    /// <summary>A design direction names a bar, node or spring that is not in the model.</summary>
    UnknownDesignItem,
    /// <summary>A beam section property or orientation out of range (non-positive modulus, area, second moment, torsion
    /// constant; an orientation vector of zero length or parallel to the member).</summary>
    BeamPropertyOutOfRange,
    /// <summary>A member subdivision or bow imperfection out of range (subdivisions outside 1..100, a bow on an undivided
    /// member, a generated intermediate node id that is already taken).</summary>
    MemberSubdivisionOutOfRange,
    /// <summary>A rotational direction (support, spring, load moment, watched DOF) at a node without rotational unknowns.</summary>
    RotationWithoutRotationalUnknowns,
}

/// <summary>
/// One problem found in a model definition. <see cref="FieldPath"/> names the offending field in the
/// caller's terms (for example <c>bars[4].area</c>), <see cref="ItemId"/> the node, bar or spring id.
/// </summary>
public sealed record ValidationFinding(FindingSeverity Severity, FindingCode Code, string FieldPath, string? ItemId, string Message)
{
    public override string ToString() => $"{Severity} {Code} at {FieldPath}{(ItemId is null ? "" : $" ('{ItemId}')")}: {Message}";
}

/// <summary>Thrown when a model definition has one or more errors; carries every finding, not just the first.</summary>
public sealed class ModelValidationException(IReadOnlyList<ValidationFinding> findings)
    : Exception(findings.Count == 0 ? "The model is invalid." : $"The model is invalid: {findings[0]}" + (findings.Count > 1 ? $" (and {findings.Count - 1} more)" : ""))
{
    public IReadOnlyList<ValidationFinding> Findings { get; } = findings;
}

/// <summary>
/// Thrown when the tangent stiffness at the start of an analysis is singular: the structure is a mechanism.
/// Names the node and the direction that the bars, springs and supports leave free.
/// </summary>
public sealed class MechanismException(string nodeId, Axis direction, string message) : Exception(message)
{
    public string NodeId { get; } = nodeId;
    public Axis Direction { get; } = direction;
}
