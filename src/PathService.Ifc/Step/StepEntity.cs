namespace PathService.Ifc.Step;

/// <summary>
/// One entity instance "#n = TYPE(...);" of the data section. <see cref="Type"/> is upper case as the exchange
/// structure writes it. A complex instance (external mapping, several records in one instance) keeps its records in
/// <see cref="Parts"/> and has the type "(COMPLEX)"; the mapper never needs one.
/// </summary>
public sealed class StepEntity
{
    public StepEntity(int number, string type, IReadOnlyList<StepValue> attributes, int line,
        IReadOnlyList<(string Type, IReadOnlyList<StepValue> Attributes)>? parts = null)
    {
        Number = number;
        Type = type;
        Attributes = attributes;
        Line = line;
        Parts = parts;
    }

    public int Number { get; }
    public string Type { get; }
    public IReadOnlyList<StepValue> Attributes { get; }
    /// <summary>1-based line of the instance's "#n" in the file.</summary>
    public int Line { get; }
    public IReadOnlyList<(string Type, IReadOnlyList<StepValue> Attributes)>? Parts { get; }

    public override string ToString() => $"#{Number}={Type}";
}
