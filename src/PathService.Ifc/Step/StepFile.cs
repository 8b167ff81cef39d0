namespace PathService.Ifc.Step;

/// <summary>The parsed exchange structure: the schema named in FILE_SCHEMA and the data section's instances by number.</summary>
public sealed class StepFile
{
    public StepFile(string schema, IReadOnlyDictionary<int, StepEntity> entities)
    {
        Schema = schema;
        Entities = entities;
    }

    /// <summary>The schema identifier, upper case, e.g. "IFC4" or "IFC2X3".</summary>
    public string Schema { get; }
    public IReadOnlyDictionary<int, StepEntity> Entities { get; }

    /// <summary>Instances of one type (upper case), in increasing entity number.</summary>
    public IEnumerable<StepEntity> OfType(string type) =>
        Entities.Values.Where(e => e.Type == type).OrderBy(e => e.Number);
}
