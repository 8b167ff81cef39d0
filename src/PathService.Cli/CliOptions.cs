using System.CommandLine;
using System.CommandLine.Parsing;
using System.Globalization;

namespace PathService.Cli;

/// <summary>
/// Every option of pathtrace, declared once with its description and its checks (System.CommandLine parses, validates,
/// writes the help and offers completions). Both "--name value" and "--name=value" work; the second lets a value start
/// with a minus sign (--amplitudes=-0.001,0.001). Names are listed with their meaning in docs/cli.md.
/// </summary>
internal static class CliOptions
{
    // Where analyses run (every command).
    public static readonly Option<string?> Server = Addresses();
    public static readonly Option<string?> ApiKey = new("--api-key")
    {
        Description = "API key of a secured server, sent in the x-api-key header (default: environment variable PATHSERVICE_API_KEY)",
        HelpName = "KEY", Recursive = true,
    };
    public static readonly Option<string?> CaFile = new("--ca-file")
    {
        Description = "trust server certificates issued by this certificate authority (PEM or DER) for https:// servers",
        HelpName = "FILE", Recursive = true,
    };

    // Outputs of trace and demo.
    public static readonly Option<string?> Out = new("--out") { Description = "folder for every output: path.csv, path.jsonl, summary.json, events.csv, curve.svg, shape.svg (beam-forces.csv for a frame; sensitivity.csv, sensitivity.svg with --design-sensitivities)", HelpName = "DIR" };
    public static readonly Option<string?> DemoOut = new("--out") { Description = "folder for every output: path.csv, path.jsonl, summary.json, events.csv, curve.svg, shape.svg (beam-forces.csv for a frame; sensitivity.csv, sensitivity.svg with --design-sensitivities)", HelpName = "DIR", Required = true };
    public static readonly Option<string?> Csv = new("--csv") { Description = "write the path table (one row per converged point) to FILE", HelpName = "FILE" };
    public static readonly Option<string?> BeamForcesCsv = new("--beam-forces-csv") { Description = "write the end forces of every beam element in every full state (one row per element end) to FILE", HelpName = "FILE" };
    public static readonly Option<string?> Jsonl = new("--jsonl") { Description = "write every streamed message as one JSON line to FILE", HelpName = "FILE" };
    public static readonly Option<string?> Summary = new("--summary") { Description = "write the closing summary and critical points as JSON to FILE", HelpName = "FILE" };
    public static readonly Option<string?> CurveSvg = new("--curve-svg") { Description = "write the load-displacement curve (SVG) to FILE", HelpName = "FILE" };
    public static readonly Option<string?> ShapeSvg = new("--shape-svg") { Description = "write the deformed shape (SVG) to FILE", HelpName = "FILE" };
    public static readonly Option<int> CurveMonitored = Whole("--curve-monitored", "which monitored displacement the curve plots (1-based)", min: 1, fallback: 1);
    public static readonly Option<int?> ShapeAt = WholeOrNone("--shape-at", "point index of the deformed shape (the point must carry its full state; default: the last such point)", min: 0);
    public static readonly Option<double?> ShapeScale = Number("--shape-scale", "displacement magnification of the deformed shape (default: picked and stated on the picture)", v => v > 0, "a positive number");
    public static readonly Option<bool> DesignSensitivities = new("--design-sensitivities")
    {
        Description = "compute the design sensitivities of λ_cr at every located critical point (per bar, node and spring); with --out also writes sensitivity.csv and sensitivity.svg",
    };
    public static readonly Option<string?> SensitivityCsv = new("--sensitivity-csv") { Description = "write the design sensitivities of every critical point (one row per parameter) to FILE", HelpName = "FILE" };
    public static readonly Option<string?> SensitivitySvg = new("--sensitivity-svg") { Description = "write the members coloured by dλ_cr/dV at the first critical point (SVG) to FILE", HelpName = "FILE" };
    public static readonly Option<bool> Quiet = new("--quiet") { Description = "no live lines and no summary table (files are still written)" };

    // check, linear, buckling.
    public static readonly Option<string?> Json = new("--json") { Description = "also write the response message as JSON to FILE", HelpName = "FILE" };
    public static readonly Option<double?> LoadFactor = Number("--load-factor", "load factor on the reference load (default 1)", double.IsFinite, "a number");
    public static readonly Option<int> ModeCount = Whole("--mode-count", "number of buckling modes (the server caps it at its MaxBucklingModes)", min: 1, fallback: 3);

    // batch.
    public static readonly Option<int> ModelsAtOnce = Whole("--parallel", "models traced at once", min: 1, fallback: Math.Max(2, Environment.ProcessorCount));
    public static readonly Option<string> Table = new("--table") { Description = "summary table file", HelpName = "FILE", DefaultValueFactory = _ => "batch-summary.csv" };

    // imperfection-sweep.
    public static readonly Option<List<double>> Amplitudes = Numbers("--amplitudes", "imperfection amplitudes, comma-separated (a sign flips the shape: --amplitudes=-0.001,0.001)", required: true);
    public static readonly Option<string> AmplitudeUnitName = Choice("--amplitude-unit", "what an amplitude measures: a length, or a fraction of the span", "length", "length", "span-fraction");
    public static readonly Option<double?> Span = Number("--span", "span the fractions refer to, in the length unit (default: the model's largest extent); only with --amplitude-unit span-fraction", v => v > 0, "a positive length");
    public static readonly Option<List<int>> Modes = ModeNumbers();
    public static readonly Option<List<double>> Weights = Numbers("--weights", "weight of each mode of --modes in the shape, comma-separated (default: all 1)", required: false);
    public static readonly Option<string?> SweepOut = new("--out") { Description = "folder for knockdown.csv and knockdown.svg", HelpName = "DIR" };

    // import.
    public static readonly Option<string?> AnalysisModel = new("--analysis-model") { Description = "name or GlobalId of the IfcStructuralAnalysisModel to read (default: the only one in the file)", HelpName = "NAME" };
    public static readonly Option<string?> ReferenceLoadGroup = new("--reference-load-group") { Description = "name or GlobalId of the load group that becomes the reference load (default: the only group with point actions)", HelpName = "GROUP" };
    public static readonly Option<string?> ConstantLoadGroup = new("--constant-load-group") { Description = "name or GlobalId of the load group that becomes the constant load (default: none)", HelpName = "GROUP" };
    public static readonly Option<string> ForceUnit = Choice("--force-unit", "force unit label of the written model", "kN", "N", "kN", "MN");
    public static readonly Option<string> LengthUnit = Choice("--length-unit", "length unit label of the written model", "m", "mm", "cm", "m");
    public static readonly Option<string?> ImportOut = new("--out") { Description = "request file to write (TracePathRequest JSON: model, load case, default controls; default: the IFC file's name with .json)", HelpName = "FILE" };

    private static Option<string?> Addresses()
    {
        var o = new Option<string?>("--server")
        {
            Description = "run on PathService over gRPC instead of in this process; several comma-separated URLs are balanced round-robin",
            HelpName = "URL[,URL...]", Recursive = true,
        };
        o.Validators.Add(r =>
        {
            if (r.Tokens.Count == 0) return;
            try { PathService.Client.Calls.ConnectionOptions.ParseAddresses(r.Tokens[0].Value); }
            catch (ArgumentException ex) { r.AddError($"--server: {ex.Message}"); }
        });
        return o;
    }

    private static Option<int> Whole(string name, string description, int min, int fallback)
    {
        var o = new Option<int>(name) { Description = description, HelpName = "N", Arity = ArgumentArity.ExactlyOne, DefaultValueFactory = _ => fallback };
        o.CustomParser = r => ParseWhole(r, name, min) ?? fallback;
        return o;
    }

    private static Option<int?> WholeOrNone(string name, string description, int min)
    {
        var o = new Option<int?>(name) { Description = description, HelpName = "N", Arity = ArgumentArity.ExactlyOne };
        o.CustomParser = r => ParseWhole(r, name, min);
        return o;
    }

    private static int? ParseWhole(ArgumentResult r, string name, int min)
    {
        string t = r.Tokens.Count > 0 ? r.Tokens[0].Value : "";
        if (int.TryParse(t, NumberStyles.Integer, CultureInfo.InvariantCulture, out int v) && v >= min) return v;
        r.AddError(min == 1 ? $"{name} must be a positive whole number, not '{t}'" : $"{name} must be a whole number of at least {min}, not '{t}'");
        return null;
    }

    private static Option<double?> Number(string name, string description, Func<double, bool> ok, string rule)
    {
        var o = new Option<double?>(name) { Description = description, HelpName = "X", Arity = ArgumentArity.ExactlyOne };
        o.CustomParser = r =>
        {
            string t = r.Tokens.Count > 0 ? r.Tokens[0].Value : "";
            if (double.TryParse(t, NumberStyles.Float, CultureInfo.InvariantCulture, out double v) && double.IsFinite(v) && ok(v)) return v;
            r.AddError($"{name} must be {rule}, not '{t}'");
            return null;
        };
        return o;
    }

    private static Option<List<double>> Numbers(string name, string description, bool required)
    {
        var o = new Option<List<double>>(name) { Description = description, HelpName = "X[,X...]", Arity = ArgumentArity.ExactlyOne, Required = required };
        o.CustomParser = r =>
        {
            var list = new List<double>();
            foreach (var t in (r.Tokens.Count > 0 ? r.Tokens[0].Value : "").Split(',', StringSplitOptions.TrimEntries))
            {
                if (double.TryParse(t, NumberStyles.Float, CultureInfo.InvariantCulture, out double v) && double.IsFinite(v)) list.Add(v);
                else { r.AddError($"{name}: '{t}' is not a number"); return []; }
            }
            return list;
        };
        return o;
    }

    private static Option<List<int>> ModeNumbers()
    {
        var o = new Option<List<int>>("--modes")
        {
            Description = "buckling modes that shape the imperfection, by number, comma-separated",
            HelpName = "N[,N...]", Arity = ArgumentArity.ExactlyOne, DefaultValueFactory = _ => [1],
        };
        o.CustomParser = r =>
        {
            if (r.Tokens.Count == 0) return [1];
            var list = new List<int>();
            foreach (var t in (r.Tokens.Count > 0 ? r.Tokens[0].Value : "").Split(',', StringSplitOptions.TrimEntries))
            {
                if (int.TryParse(t, NumberStyles.Integer, CultureInfo.InvariantCulture, out int m) && m >= 1) list.Add(m);
                else { r.AddError($"--modes: '{t}' is not a mode number (1, 2, ...)"); return []; }
            }
            return list;
        };
        return o;
    }

    private static Option<string> Choice(string name, string description, string fallback, params string[] values)
    {
        var o = new Option<string>(name) { Description = description, HelpName = string.Join("|", values), DefaultValueFactory = _ => fallback };
        o.Validators.Add(r =>
        {
            string t = r.Tokens.Count > 0 ? r.Tokens[0].Value : fallback;
            if (!values.Contains(t)) r.AddError($"{name} must be {string.Join(" or ", values.Select(v => $"'{v}'"))}, not '{t}'");
        });
        o.CompletionSources.Add(values);
        return o;
    }
}
