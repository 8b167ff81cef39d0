using System.Globalization;
using PathService.Ifc.Step;

namespace PathService.Ifc.Mapping;

/// <summary>
/// The file's units (IfcProject.UnitsInContext → IfcUnitAssignment; ISO 16739-1:2018, IfcMeasureResource) as SI
/// factors, and the factors that turn each kind of quantity the mapper reads into the caller's labels. IfcSIUnit
/// carries a prefix that applies to the base unit before any power (a MILLI SQUARE_METRE is 1e-6 m²);
/// IfcConversionBasedUnit carries its factor to another unit; IfcDerivedUnit is the product of its elements' powers.
/// Kinds the file does not assign are derived from length and force (stiffness = force/length, modulus =
/// force/length², area = length²) and said so in a finding.
/// </summary>
internal sealed class UnitScales
{
    private static readonly Dictionary<string, double> Prefixes = new()
    {
        ["EXA"] = 1e18, ["PETA"] = 1e15, ["TERA"] = 1e12, ["GIGA"] = 1e9, ["MEGA"] = 1e6, ["KILO"] = 1e3, ["HECTO"] = 1e2,
        ["DECA"] = 1e1, ["DECI"] = 1e-1, ["CENTI"] = 1e-2, ["MILLI"] = 1e-3, ["MICRO"] = 1e-6, ["NANO"] = 1e-9,
        ["PICO"] = 1e-12, ["FEMTO"] = 1e-15, ["ATTO"] = 1e-18,
    };

    /// <summary>Target labels the caller may ask for, with their SI factors.</summary>
    public static readonly IReadOnlyDictionary<string, double> ForceLabels = new Dictionary<string, double> { ["N"] = 1, ["kN"] = 1e3, ["MN"] = 1e6 };
    public static readonly IReadOnlyDictionary<string, double> LengthLabels = new Dictionary<string, double> { ["mm"] = 1e-3, ["cm"] = 1e-2, ["m"] = 1 };

    private readonly EntityAccess _access;
    private readonly Dictionary<string, (double Si, string Text, int Entity)> _assigned = new();

    public UnitScales(EntityAccess access, string forceLabel, string lengthLabel, FindingSink findings)
    {
        _access = access;
        TargetForce = ForceLabels[forceLabel];
        TargetLength = LengthLabels[lengthLabel];
        ForceLabel = forceLabel;
        LengthLabel = lengthLabel;
        var project = access.File.OfType("IFCPROJECT").FirstOrDefault();
        var assignment = project is null ? null : access.OptionalRef(project, 9, "UnitsInContext", "IFCUNITASSIGNMENT");
        if (assignment is not null)
        {
            foreach (var unit in access.RefList(assignment, 1, "Units"))
            {
                var (kind, si, text) = unit.Type switch
                {
                    "IFCSIUNIT" => SiUnit(unit),
                    "IFCCONVERSIONBASEDUNIT" => Converted(unit),
                    "IFCDERIVEDUNIT" => Derived(unit),
                    _ => (null, 0.0, ""),
                };
                if (kind is not null && double.IsFinite(si)) _assigned.TryAdd(kind, (si, text, unit.Number));
            }
        }
        assignmentField = assignment is null ? (project is null ? "" : $"ifc #{project.Number}") : $"ifc #{assignment.Number}";
        Length = Factor("LENGTHUNIT", findings, () => (1, "m"));
        Force = Factor("FORCEUNIT", findings, () => (1, "N"));
        Area = Factor("AREAUNIT", findings, () => (LengthSi * LengthSi, $"({LengthText})²"), quiet: true);
        Modulus = Factor("MODULUSOFELASTICITYUNIT", findings,
            () => _assigned.TryGetValue("PRESSUREUNIT", out var p) ? (p.Si, p.Text) : (ForceSi / (LengthSi * LengthSi), $"{ForceText}/({LengthText})²"));
        Stiffness = Factor("LINEARSTIFFNESSUNIT", findings, () => (ForceSi / LengthSi, $"{ForceText}/{LengthText}"));
    }

    public string ForceLabel { get; }
    public string LengthLabel { get; }
    private double TargetForce { get; }
    private double TargetLength { get; }
    private double LengthSi => _assigned.TryGetValue("LENGTHUNIT", out var u) ? u.Si : 1;
    private double ForceSi => _assigned.TryGetValue("FORCEUNIT", out var u) ? u.Si : 1;
    private string LengthText => _assigned.TryGetValue("LENGTHUNIT", out var u) ? u.Text : "m";
    private string ForceText => _assigned.TryGetValue("FORCEUNIT", out var u) ? u.Text : "N";

    /// <summary>Multipliers from file values to the caller's labels.</summary>
    public double Length { get; }
    public double Force { get; }
    public double Area { get; }
    public double Modulus { get; }
    public double Stiffness { get; }

    private readonly List<string> _notes = [];
    private readonly string assignmentField = "";
    public string Note =>
        $"converted from the file's units to {ForceLabel} and {LengthLabel}: " + string.Join("; ", _notes);

    private double Factor(string kind, FindingSink findings, Func<(double Si, string Text)> fallback, bool quiet = false)
    {
        double si;
        string text;
        string source;
        if (_assigned.TryGetValue(kind, out var u)) { si = u.Si; text = u.Text; source = $"#{u.Entity}"; }
        else
        {
            (si, text) = fallback();
            source = "not assigned";
            if (!quiet)
                findings.Warning("UNIT_ASSUMED", assignmentField, "", $"the file assigns no {kind}; {text} assumed");
        }
        double target = kind switch
        {
            "LENGTHUNIT" => TargetLength,
            "FORCEUNIT" => TargetForce,
            "AREAUNIT" => TargetLength * TargetLength,
            "MODULUSOFELASTICITYUNIT" => TargetForce / (TargetLength * TargetLength),
            _ => TargetForce / TargetLength,
        };
        double factor = si / target;
        string label = kind switch
        {
            "LENGTHUNIT" => "length", "FORCEUNIT" => "force", "AREAUNIT" => "area",
            "MODULUSOFELASTICITYUNIT" => "modulus", _ => "stiffness",
        };
        _notes.Add($"{label} {text} ({source}) × {factor.ToString("G6", CultureInfo.InvariantCulture)}");
        return factor;
    }

    private (string? Kind, double Si, string Text) SiUnit(StepEntity u)
    {
        string kind = _access.OptionalEnum(u, 2, "UnitType") ?? throw EntityAccess.Error(u, 2, "UnitType", "is required");
        string? prefix = _access.OptionalEnum(u, 3, "Prefix");
        string name = _access.OptionalEnum(u, 4, "Name") ?? throw EntityAccess.Error(u, 4, "Name", "is required");
        double p = 1;
        if (prefix is not null && !Prefixes.TryGetValue(prefix, out p))
            throw EntityAccess.Error(u, 3, "Prefix", $"'{prefix}' is not an SI prefix");
        (double baseSi, int power, string sym) = name switch
        {
            "METRE" => (1.0, 1, "m"),
            "SQUARE_METRE" => (1.0, 2, "m²"),
            "CUBIC_METRE" => (1.0, 3, "m³"),
            "NEWTON" => (1.0, 1, "N"),
            "PASCAL" => (1.0, 1, "Pa"),
            "GRAM" => (1e-3, 1, "g"),
            "SECOND" => (1.0, 1, "s"),
            _ => (double.NaN, 1, name.ToLowerInvariant()),
        };
        return (kind, baseSi * Math.Pow(p, power), (prefix is null ? "" : PrefixSymbol(prefix)) + sym);
    }

    private static string PrefixSymbol(string p) => p switch
    {
        "KILO" => "k", "MEGA" => "M", "GIGA" => "G", "MILLI" => "m", "CENTI" => "c", "DECI" => "d", "MICRO" => "µ",
        _ => p.ToLowerInvariant() + "-",
    };

    private (string? Kind, double Si, string Text) Converted(StepEntity u)
    {
        string kind = _access.OptionalEnum(u, 2, "UnitType") ?? throw EntityAccess.Error(u, 2, "UnitType", "is required");
        string name = _access.OptionalString(u, 3, "Name") ?? "unnamed";
        var measure = _access.Ref(u, 4, "ConversionFactor", "IFCMEASUREWITHUNIT");
        double value = EntityAccess.NumberOf(_access.Raw(measure, 1, "ValueComponent"))
            ?? throw EntityAccess.Error(measure, 1, "ValueComponent", "must be a number");
        var inner = _access.Ref(measure, 2, "UnitComponent", "IFCSIUNIT", "IFCCONVERSIONBASEDUNIT", "IFCDERIVEDUNIT");
        var (_, si, _) = inner.Type switch
        {
            "IFCSIUNIT" => SiUnit(inner),
            "IFCCONVERSIONBASEDUNIT" => Converted(inner),
            _ => Derived(inner),
        };
        return (kind, value * si, name);
    }

    private (string? Kind, double Si, string Text) Derived(StepEntity u)
    {
        string kind = _access.OptionalEnum(u, 2, "UnitType") ?? throw EntityAccess.Error(u, 2, "UnitType", "is required");
        double si = 1;
        var parts = new List<string>();
        foreach (var element in _access.RefList(u, 1, "Elements", "IFCDERIVEDUNITELEMENT"))
        {
            var unit = _access.Ref(element, 1, "Unit", "IFCSIUNIT", "IFCCONVERSIONBASEDUNIT");
            double exponent = _access.Number(element, 2, "Exponent");
            var (_, s, text) = unit.Type == "IFCSIUNIT" ? SiUnit(unit) : Converted(unit);
            si *= Math.Pow(s, exponent);
            parts.Add(exponent == 1 ? text : $"{text}^{exponent.ToString(CultureInfo.InvariantCulture)}");
        }
        return (kind, si, string.Join("·", parts));
    }
}
