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
        void Write(string? path, Func<string?> content)
        {
            if (path is null) return;
            string? text = content();
            if (text is null) { Console.Error.WriteLine($"nothing to write to {path} (no point carries the full state; set controls.fullStateEvery or fullStateAtEnd)"); return; }
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
        }
        Write(o.GetValue(Csv), rec.Csv);
        Write(o.GetValue(Jsonl), rec.JsonLines);
        Write(o.GetValue(Summary), rec.SummaryJson);
        Write(o.GetValue(CurveSvg), () => Pictures.Curve(request, rec, o.GetValue(CurveMonitored) - 1));
        Write(o.GetValue(ShapeSvg), () => Pictures.Shape(request, rec, o.GetValue(ShapeAt), o.GetValue(ShapeScale)));
        foreach (var w in written) Console.WriteLine($"wrote {w}");
    }
}
