namespace PathService.Ifc.Mapping;

/// <summary>What to import and in which units.</summary>
public sealed class IfcImportOptions
{
    /// <summary>Largest file accepted, in bytes; a larger one is refused after reading at most this many bytes.</summary>
    public long MaxBytes { get; init; } = 16L << 20;
    /// <summary>Name or GlobalId of the IfcStructuralAnalysisModel to read; required only when the file holds several.</summary>
    public string? AnalysisModel { get; init; }
    /// <summary>Name or GlobalId of the IfcStructuralLoadGroup that becomes the reference load (scaled by λ); required
    /// only when the file holds several load groups with point actions.</summary>
    public string? ReferenceLoadGroup { get; init; }
    /// <summary>Name or GlobalId of an IfcStructuralLoadGroup that becomes the constant load; none by default.</summary>
    public string? ConstantLoadGroup { get; init; }
    /// <summary>Force label of the result: "N", "kN" (default) or "MN".</summary>
    public string ForceUnit { get; init; } = "kN";
    /// <summary>Length label of the result: "mm", "cm" or "m" (default).</summary>
    public string LengthUnit { get; init; } = "m";
}
