using PathService.Ifc.Step;

namespace PathService.Ifc.Mapping;

/// <summary>
/// Strict, specific access to the attributes the mapper needs. Attributes are numbered from 1 in the order of the
/// entity's EXPRESS declaration, inherited attributes first (ISO 10303-21:2016 clause 12.2.1 from memory; the order
/// the IFC specification lists them in). Every failure names the instance, the attribute number and name, and why.
/// </summary>
internal sealed class EntityAccess(StepFile file)
{
    public StepFile File { get; } = file;

    public StepEntity Get(int number) => File.Entities[number]; // references were checked by the reader

    private static StepFormatException Bad(StepEntity e, int attribute, string name, string why) =>
        new("BAD_ATTRIBUTE", $"{e.Type}.{name} {why}", e.Number, attribute, e.Line);

    public StepValue Raw(StepEntity e, int attribute, string name)
    {
        if (attribute > e.Attributes.Count)
            throw Bad(e, attribute, name, $"is missing: the instance has {e.Attributes.Count} attributes, {File.Schema} declares at least {attribute}");
        return e.Attributes[attribute - 1];
    }

    public bool IsSet(StepEntity e, int attribute) =>
        attribute <= e.Attributes.Count && e.Attributes[attribute - 1] is not StepOmitted;

    public StepEntity? OptionalRef(StepEntity e, int attribute, string name, params string[] types) =>
        Raw(e, attribute, name) switch
        {
            StepOmitted => null,
            StepRef r => CheckType(e, attribute, name, Get(r.Number), types),
            var v => throw Bad(e, attribute, name, $"must be a reference, found {v.Kind}"),
        };

    public StepEntity Ref(StepEntity e, int attribute, string name, params string[] types) =>
        OptionalRef(e, attribute, name, types) ?? throw Bad(e, attribute, name, "is required but unset ($)");

    private static StepEntity CheckType(StepEntity e, int attribute, string name, StepEntity target, string[] types)
    {
        if (types.Length == 0 || types.Contains(target.Type)) return target;
        throw Bad(e, attribute, name, $"refers to #{target.Number} of type {target.Type}, expected {string.Join(" or ", types)}");
    }

    public IReadOnlyList<StepEntity> RefList(StepEntity e, int attribute, string name, params string[] types)
    {
        var v = Raw(e, attribute, name);
        if (v is StepNull) return [];
        if (v is not StepList list) throw Bad(e, attribute, name, $"must be a list of references, found {v.Kind}");
        var result = new List<StepEntity>(list.Items.Count);
        for (int i = 0; i < list.Items.Count; i++)
        {
            if (list.Items[i] is not StepRef r) throw Bad(e, attribute, name, $"item {i + 1} must be a reference, found {list.Items[i].Kind}");
            result.Add(CheckType(e, attribute, name, Get(r.Number), types));
        }
        return result;
    }

    public string? OptionalString(StepEntity e, int attribute, string name) =>
        Raw(e, attribute, name) switch
        {
            StepOmitted => null,
            StepString s => s.Value,
            StepTyped { Inner: StepString s } => s.Value,
            var v => throw Bad(e, attribute, name, $"must be a string, found {v.Kind}"),
        };

    public string? OptionalEnum(StepEntity e, int attribute, string name) =>
        Raw(e, attribute, name) switch
        {
            StepOmitted => null,
            StepEnum s => s.Value,
            var v => throw Bad(e, attribute, name, $"must be an enumeration (.VALUE.), found {v.Kind}"),
        };

    public double? OptionalNumber(StepEntity e, int attribute, string name) =>
        Raw(e, attribute, name) switch
        {
            StepOmitted => null,
            var v => NumberOf(v) ?? throw Bad(e, attribute, name, $"must be a number, found {v.Kind}"),
        };

    public double Number(StepEntity e, int attribute, string name) =>
        OptionalNumber(e, attribute, name) ?? throw Bad(e, attribute, name, "is required but unset ($)");

    public double PositiveNumber(StepEntity e, int attribute, string name)
    {
        double v = Number(e, attribute, name);
        if (!(v > 0)) throw Bad(e, attribute, name, $"must be positive, found {v}");
        return v;
    }

    public double[] Coordinates(StepEntity e, int attribute, string name)
    {
        var v = Raw(e, attribute, name);
        if (v is not StepList { Items.Count: >= 1 and <= 3 } list)
            throw Bad(e, attribute, name, $"must be a list of 1 to 3 numbers, found {v.Kind}");
        var result = new double[3];
        for (int i = 0; i < list.Items.Count; i++)
            result[i] = NumberOf(list.Items[i]) ?? throw Bad(e, attribute, name, $"item {i + 1} must be a number, found {list.Items[i].Kind}");
        return result;
    }

    public static double? NumberOf(StepValue v) => v switch
    {
        StepReal r => r.Value,
        StepInteger i => i.Value,
        StepTyped t => NumberOf(t.Inner),
        _ => null,
    };

    public static StepFormatException Error(StepEntity e, int attribute, string name, string why) => Bad(e, attribute, name, why);
}
