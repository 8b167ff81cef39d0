using System.CommandLine;
using PathService.Cli.Backends;
using PathService.Cli.Commands;
using static PathService.Cli.CliOptions;

namespace PathService.Cli;

/// <summary>The commands of pathtrace, their arguments and options, and the checks that span several options.</summary>
internal static class CommandLine
{
    /// <summary>Names that changed in v1 (no aliases), so that an old script gets told the new name (docs/cli.md).</summary>
    public static readonly IReadOnlyDictionary<string, string> RenamedInV1 = new Dictionary<string, string>
    {
        ["sweep"] = "use 'imperfection-sweep'",
        ["--modes"] = "the number of buckling modes is --mode-count (--modes is imperfection-sweep's list of mode numbers)",
        ["--svg"] = "use --curve-svg",
        ["--plot-monitored"] = "use --curve-monitored",
        ["--unit"] = "use --amplitude-unit length|span-fraction",
    };

    public static RootCommand Build()
    {
        var root = new RootCommand("""
            pathtrace: traces equilibrium paths of pin-jointed space trusses, checks models, runs linear and linearised
            buckling analyses, in this process or on PathService over gRPC. Results aid a qualified engineer's judgement;
            check them against local codes and licensed practice, and verify the input units.
            exit codes: 0 success, 1 bad command line, 2 invalid input, 3 target not reached, 4 server unavailable,
            5 some batch models failed, 6 authentication failed, 7 refused by the server's limits, 8 restarted trace differs
            """);
        root.Options.Add(Server);
        root.Options.Add(ApiKey);
        root.Options.Add(CaFile);

        var model = ModelArgument();
        var trace = Command("trace", "trace the equilibrium path, printing each point as it converges", model,
            Out, Csv, BeamForcesCsv, Jsonl, Summary, CurveSvg, ShapeSvg, CurveMonitored, ShapeAt, ShapeScale, DesignSensitivities, SensitivityCsv, SensitivitySvg, Quiet);
        trace.SetAction((p, ct) => WithBackend(p, b => TraceCommand.RunAsync(b, RequestReader.Read(p.GetValue(model)!), p, Out, ct)));

        var demo = Command("demo", "trace the built-in market-hall dome and write every output", null,
            DemoOut, Csv, BeamForcesCsv, Jsonl, Summary, CurveSvg, ShapeSvg, CurveMonitored, ShapeAt, ShapeScale, DesignSensitivities, SensitivityCsv, SensitivitySvg, Quiet);
        demo.SetAction((p, ct) => WithBackend(p, b => TraceCommand.RunAsync(b, RequestReader.Read(DemoModel.Path()), p, DemoOut, ct)));

        var check = Command("check", "validate model, load case and controls; print every finding at once", model, Json);
        check.SetAction((p, ct) => WithBackend(p, b => UnaryCommands.CheckAsync(b, RequestReader.Read(p.GetValue(model)!), p, ct)));

        var linear = Command("linear", "small-displacement linear analysis: bar forces and nodal displacements", model, LoadFactor, Json);
        linear.SetAction((p, ct) => WithBackend(p, b => UnaryCommands.LinearAsync(b, RequestReader.Read(p.GetValue(model)!), p, ct)));

        var buckling = Command("buckling", "linearised buckling load factors and the load alignment of each mode", model, ModeCount, Json);
        buckling.SetAction((p, ct) => WithBackend(p, b => UnaryCommands.BucklingAsync(b, RequestReader.Read(p.GetValue(model)!), p, ct)));

        var pattern = new Argument<string>("models") { Description = "a folder, or a glob such as models/dome-*.json (.json and .pb files)" };
        var batch = Command("batch", "trace every model of a folder or glob concurrently and write one summary table", pattern, ModelsAtOnce, Table);
        batch.SetAction((p, ct) => WithBackend(p, b => BatchCommand.RunAsync(b, p.GetValue(pattern)!, p, ct)));

        var sweep = Command("imperfection-sweep", "knock-down curve: the first critical load of the structure with imperfections of each amplitude", model,
            Amplitudes, AmplitudeUnitName, Span, Modes, Weights, SweepOut);
        sweep.Validators.Add(r =>
        {
            try { CheckSweep(r); }
            catch (InvalidOperationException) { } // an option that did not parse has its own error already
        });
        static void CheckSweep(System.CommandLine.Parsing.CommandResult r)
        {
            if (r.GetResult(Span) is not null && r.GetValue(AmplitudeUnitName) != "span-fraction")
                r.AddError("--span applies only with --amplitude-unit span-fraction");
            List<int> m = r.GetResult(Modes) is not null && r.GetValue(Modes) is { Count: > 0 } given ? given : [1];
            if (r.GetResult(Weights) is not null && r.GetValue(Weights) is { Count: > 0 } w && w.Count != m.Count)
                r.AddError($"--weights gives {w.Count} weights for {m.Count} modes (--modes {string.Join(",", m)}): give one weight per mode");
        }
        sweep.SetAction((p, ct) => WithBackend(p, b => ImperfectionSweepCommand.RunAsync(b, RequestReader.Read(p.GetValue(model)!), p, ct)));

        var ifc = new Argument<string>("file") { Description = "IFC file (ISO 10303-21, IFC4 or IFC2X3) holding a structural analysis model" };
        var import = Command("import", "read the structural analysis model of an IFC file and write it as a request file", ifc,
            AnalysisModel, ReferenceLoadGroup, ConstantLoadGroup, ForceUnit, LengthUnit, ImportOut);
        import.SetAction((p, ct) => WithBackend(p, b => ImportCommand.RunAsync(b, p.GetValue(ifc)!, p, ct)));

        foreach (var c in new[] { trace, check, linear, buckling, batch, sweep, demo, import }) root.Subcommands.Add(c);
        return root;
    }

    private static Argument<string> ModelArgument() => new("model")
    {
        Description = "request file: .json (Protobuf JSON mapping of TracePathRequest) or .pb/.bin (binary)",
    };

    private static Command Command(string name, string description, Argument<string>? argument, params Option[] options)
    {
        var c = new Command(name, description);
        if (argument is not null) c.Arguments.Add(argument);
        foreach (var o in options) c.Options.Add(o);
        // --api-key and --ca-file only mean something with --server.
        c.Validators.Add(r =>
        {
            if (r.GetResult(Server) is not null) return;
            if (r.GetResult(ApiKey) is not null) r.AddError("--api-key needs --server (in-process analyses need no key)");
            if (r.GetResult(CaFile) is not null) r.AddError("--ca-file needs --server https://...");
        });
        return c;
    }

    private static async Task<int> WithBackend(ParseResult p, Func<IAnalysisBackend, Task<int>> run)
    {
        await using IAnalysisBackend backend = p.GetValue(Server) is { } server ? new GrpcBackend(server, ConnectionSettings.From(p)) : new InProcessBackend();
        return await run(backend);
    }
}
