namespace PathService.Ifc.Mapping;

/// <summary>The option of <see cref="IfcImportOptions"/> that a file cannot satisfy.</summary>
public enum IfcOption
{
    ForceUnit,
    LengthUnit,
    AnalysisModel,
    ReferenceLoadGroup,
    ConstantLoadGroup,
}

/// <summary>
/// An import option the file cannot satisfy (an unknown unit, no or several analysis models or load groups matching
/// the name given, the same group asked as constant and reference); names the option, so a caller can point at its own
/// field without reading the message.
/// </summary>
public sealed class IfcOptionException(IfcOption option, string message) : ArgumentException(message, "options")
{
    public IfcOption Option { get; } = option;
}
