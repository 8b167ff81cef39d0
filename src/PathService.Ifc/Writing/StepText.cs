using System.Globalization;
using PathService.Ifc.Step;

namespace PathService.Ifc.Writing;

/// <summary>
/// Appends entity instances to an exchange structure with consecutive instance numbers, and formats parameters in the
/// clear-text encoding of ISO 10303-21:2016: reals always with a decimal point and round-trip precision ("R"), strings
/// quoted with the escapes of <see cref="StepStrings"/>, enumerations between dots, references "#n", "$" for unset.
/// </summary>
internal sealed class StepText(TextWriter writer)
{
    private int _next = 1;

    public int Add(string type, params string[] parameters)
    {
        int n = _next++;
        writer.Write('#');
        writer.Write(n.ToString(CultureInfo.InvariantCulture));
        writer.Write('=');
        writer.Write(type);
        writer.Write('(');
        writer.Write(string.Join(",", parameters));
        writer.Write(");\n");
        return n;
    }

    public const string Unset = "$";
    public const string Derived = "*";

    public static string Real(double v)
    {
        string s = v.ToString("R", CultureInfo.InvariantCulture);
        if (s.Contains('.')) return s;
        int e = s.IndexOfAny(['E', 'e']);
        return e < 0 ? s + "." : s[..e] + "." + s[e..];
    }

    public static string Int(int v) => v.ToString(CultureInfo.InvariantCulture);
    public static string Str(string? v) => v is null ? Unset : StepStrings.Encode(v);
    public static string Enum(string v) => "." + v + ".";
    public static string Ref(int n) => "#" + n.ToString(CultureInfo.InvariantCulture);
    public static string Refs(IEnumerable<int> ns) => "(" + string.Join(",", ns.Select(Ref)) + ")";
    public static string List(IEnumerable<string> items) => "(" + string.Join(",", items) + ")";
    public static string Typed(string type, string inner) => type + "(" + inner + ")";
}
