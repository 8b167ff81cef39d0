namespace PathService.Ifc.Step;

/// <summary>
/// A file that cannot be read: the message names the entity instance, the attribute (1-based, as the IFC
/// specification numbers them) and why. <see cref="Code"/> is a stable UPPER_SNAKE_CASE reason.
/// </summary>
public sealed class StepFormatException : Exception
{
    public StepFormatException(string code, string message, int? entity = null, int? attribute = null, int? line = null)
        : base(Compose(message, entity, attribute, line))
    {
        Code = code;
        Entity = entity;
        Attribute = attribute;
        Line = line;
    }

    public string Code { get; }
    public int? Entity { get; }
    public int? Attribute { get; }
    public int? Line { get; }

    private static string Compose(string message, int? entity, int? attribute, int? line)
    {
        var where = new List<string>();
        if (entity is { } e) where.Add($"#{e}");
        if (attribute is { } a) where.Add($"attribute {a}");
        if (line is { } l) where.Add($"line {l}");
        return where.Count == 0 ? message : $"{string.Join(", ", where)}: {message}";
    }
}
