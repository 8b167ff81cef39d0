namespace PathService.Bench;

/// <summary>--name value pairs from the command line.</summary>
public sealed class Options
{
    private readonly Dictionary<string, string> _values = new(StringComparer.OrdinalIgnoreCase);

    public static Options Parse(string[] args)
    {
        var o = new Options();
        for (int i = 0; i < args.Length; i++)
            if (args[i].StartsWith("--", StringComparison.Ordinal))
                o._values[args[i][2..]] = i + 1 < args.Length && !args[i + 1].StartsWith("--", StringComparison.Ordinal) ? args[++i] : "true";
        return o;
    }

    public int Int(string name, int fallback) => _values.TryGetValue(name, out var v) ? int.Parse(v) : fallback;
    public double Double(string name, double fallback) => _values.TryGetValue(name, out var v) ? double.Parse(v, System.Globalization.CultureInfo.InvariantCulture) : fallback;
    public string String(string name, string fallback) => _values.TryGetValue(name, out var v) ? v : fallback;
}
