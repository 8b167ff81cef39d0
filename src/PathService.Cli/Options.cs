namespace PathService.Cli;

/// <summary>Parsed command line: a command, positional arguments and --name value options.</summary>
internal sealed class Options
{
    public string Command { get; private init; } = "";
    public List<string> Positional { get; } = [];
    private readonly Dictionary<string, string> _named = new(StringComparer.Ordinal);
    private static readonly HashSet<string> Flags = ["help", "quiet"];

    public static Options Parse(string[] args)
    {
        var o = new Options { Command = args.Length > 0 ? args[0] : "help" };
        for (int i = 1; i < args.Length; i++)
        {
            if (args[i].StartsWith("--", StringComparison.Ordinal))
            {
                string name = args[i][2..];
                // --name=value, which also lets a value start with a minus sign (--amplitudes=-0.001,-0.002).
                int eq = name.IndexOf('=');
                if (eq > 0) { o._named[name[..eq]] = name[(eq + 1)..]; continue; }
                if (Flags.Contains(name)) { o._named[name] = "true"; continue; }
                if (i + 1 >= args.Length) throw new UsageException($"option --{name} needs a value");
                o._named[name] = args[++i];
            }
            else o.Positional.Add(args[i]);
        }
        return o;
    }

    public string? Get(string name) => _named.GetValueOrDefault(name);
    public bool Has(string name) => _named.ContainsKey(name);

    public int GetInt(string name, int fallback)
    {
        if (Get(name) is not { } v) return fallback;
        return int.TryParse(v, out int r) && r > 0 ? r : throw new UsageException($"--{name} must be a positive whole number, not '{v}'");
    }

    public double? GetDouble(string name)
    {
        if (Get(name) is not { } v) return null;
        return double.TryParse(v, System.Globalization.NumberStyles.Float, System.Globalization.CultureInfo.InvariantCulture, out double r) && double.IsFinite(r)
            ? r : throw new UsageException($"--{name} must be a number, not '{v}'");
    }
}

internal sealed class UsageException(string message) : Exception(message);
