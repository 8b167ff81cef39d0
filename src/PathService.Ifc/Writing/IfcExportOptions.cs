namespace PathService.Ifc.Writing;

/// <summary>How to write a model as IFC.</summary>
public sealed class IfcExportOptions
{
    /// <summary>Name of the load group that carries the reference load (scaled by λ).</summary>
    public string ReferenceLoadGroup { get; init; } = "reference";
    /// <summary>Name of the load group that carries the constant load (written only when the load case has one).</summary>
    public string ConstantLoadGroup { get; init; } = "constant";
    /// <summary>Time stamp written in FILE_NAME; fixed by default so that output is reproducible.</summary>
    public string TimeStamp { get; init; } = "2000-01-01T00:00:00";
}
