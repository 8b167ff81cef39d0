namespace PathService.Ifc.Step;

/// <summary>
/// One parameter of an entity instance in an ISO 10303-21 exchange structure (ISO 10303-21:2016, clause 12.2.2 from
/// memory: the untyped, typed and omitted parameters of a simple record).
/// </summary>
public abstract record StepValue
{
    /// <summary>A short name of the kind of value, used in error messages ("a real", "a reference").</summary>
    public abstract string Kind { get; }
}

/// <summary>A parameter that carries no value: "$" (<see cref="StepNull"/>) or "*" (<see cref="StepDerived"/>).</summary>
public abstract record StepOmitted(char Symbol, string Meaning) : StepValue
{
    public override string Kind => $"{Symbol} ({Meaning})";
}

/// <summary>"$": an unset OPTIONAL attribute.</summary>
public sealed record StepNull() : StepOmitted('$', "unset")
{
    public static readonly StepNull Instance = new();
}

/// <summary>"*": an attribute redeclared as DERIVED in a subtype.</summary>
public sealed record StepDerived() : StepOmitted('*', "derived")
{
    public static readonly StepDerived Instance = new();
}

public sealed record StepInteger(long Value) : StepValue
{
    public override string Kind => "an integer";
}

public sealed record StepReal(double Value) : StepValue
{
    public override string Kind => "a real";
}

public sealed record StepString(string Value) : StepValue
{
    public override string Kind => "a string";
}

/// <summary>An enumeration or boolean/logical literal, stored without the dots (".T." → "T").</summary>
public sealed record StepEnum(string Value) : StepValue
{
    public override string Kind => "an enumeration";
}

/// <summary>An entity instance name "#n".</summary>
public sealed record StepRef(int Number) : StepValue
{
    public override string Kind => "a reference";
}

public sealed record StepBinary(string Hex) : StepValue
{
    public override string Kind => "a binary";
}

public sealed record StepList(IReadOnlyList<StepValue> Items) : StepValue
{
    public override string Kind => "a list";
}

/// <summary>A typed parameter such as IFCLENGTHMEASURE(1.5): a SELECT value carrying its defined type's name.</summary>
public sealed record StepTyped(string TypeName, StepValue Inner) : StepValue
{
    public override string Kind => $"a typed {TypeName}";
}
