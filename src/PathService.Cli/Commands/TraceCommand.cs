using PathService.Cli.Backends;
using PathService.Cli.Output;
using System.CommandLine;
using PathService.Contracts.V1;
using static PathService.Cli.CliOptions;

namespace PathService.Cli.Commands;

/// <summary>Traces one model, printing the path live, and writes the requested outputs.</summary>
internal static class TraceCommand
{
    public static async Task<int> RunAsync(IAnalysisBackend backend, TracePathRequest request, ParseResult o, Option<string?> outFolder, CancellationToken ct)
    {
        var rec = new PathRecorder();
        bool quiet = o.GetValue(Quiet);
        if (o.GetValue(DesignSensitivities)) (request.Controls ??= new SolverControls()).DesignSensitivities = true;
        if (!quiet) ConsoleReport.Header(request, backend.Description);
        await foreach (var r in backend.TraceAsync(request, ct))
        {
            rec.Add(r);
            if (!quiet) ConsoleReport.Live(r);
        }
        if (!quiet) ConsoleReport.Summary(rec);
        WriteOutputs(request, rec, o, outFolder);
        return rec.Summary?.Completed == true ? ExitCodes.Success : ExitCodes.TargetNotReached;
    }

    public static void WriteOutputs(TracePathRequest request, PathRecorder rec, ParseResult o, Option<string?> outFolder)
    {
        var written = new List<string>();
        const string NoState = "no point carries the full state; set controls.fullStateEvery or fullStateAtEnd";
        const string NoSensitivity = "no located critical point carries design sensitivities; use --design-sensitivities";
        void Write(string? path, Func<string?> content, string whyEmpty = NoState)
        {
            if (path is null) return;
            string? text = content();
            if (text is null) { Console.Error.WriteLine($"nothing to write to {path} ({whyEmpty})"); return; }
            Directory.CreateDirectory(Path.GetDirectoryName(Path.GetFullPath(path))!);
            File.WriteAllText(path, text);
            written.Add(path);
        }
        if (o.GetValue(outFolder) is { } dir)
        {
            Directory.CreateDirectory(dir);
            Write(Path.Combine(dir, "path.csv"), rec.Csv);
            Write(Path.Combine(dir, "path.jsonl"), rec.JsonLines);
            Write(Path.Combine(dir, "summary.json"), rec.SummaryJson);
            Write(Path.Combine(dir, "events.csv"), rec.EventsCsv);
            Write(Path.Combine(dir, "curve.svg"), () => Pictures.Curve(request, rec, o.GetValue(CurveMonitored) - 1));
            Write(Path.Combine(dir, "shape.svg"), () => Pictures.Shape(request, rec, o.GetValue(ShapeAt), o.GetValue(ShapeScale)));
            if (request.Model?.Beams.Count > 0)
                Write(Path.Combine(dir, "beam-forces.csv"), () => rec.BeamForcesCsv(Force(request), Length(request)));
            if (rec.Criticals.Any(c => c.Sensitivity is { Defined: true }))
            {
                Write(Path.Combine(dir, "sensitivity.csv"), () => rec.SensitivityCsv(Force(request), Length(request)), NoSensitivity);
                Write(Path.Combine(dir, "sensitivity.svg"), () => Pictures.Sensitivity(request, rec), NoSensitivity);
            }
        }
        Write(o.GetValue(Csv), rec.Csv);
        Write(o.GetValue(Jsonl), rec.JsonLines);
        Write(o.GetValue(Summary), rec.SummaryJson);
        Write(o.GetValue(CurveSvg), () => Pictures.Curve(request, rec, o.GetValue(CurveMonitored) - 1));
        Write(o.GetValue(ShapeSvg), () => Pictures.Shape(request, rec, o.GetValue(ShapeAt), o.GetValue(ShapeScale)));
        Write(o.GetValue(BeamForcesCsv), () => rec.BeamForcesCsv(Force(request), Length(request)));
        Write(o.GetValue(SensitivityCsv), () => rec.SensitivityCsv(Force(request), Length(request)), NoSensitivity);
        Write(o.GetValue(SensitivitySvg), () => Pictures.Sensitivity(request, rec), NoSensitivity);
        foreach (var w in written) Console.WriteLine($"wrote {w}");
    }

    private static string Force(TracePathRequest r) => string.IsNullOrWhiteSpace(r.Model?.Units?.Force) ? "kN" : r.Model.Units.Force;
    private static string Length(TracePathRequest r) => string.IsNullOrWhiteSpace(r.Model?.Units?.Length) ? "m" : r.Model.Units.Length;
}
