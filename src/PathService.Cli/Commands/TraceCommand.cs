using PathService.Cli.Backends;
using PathService.Cli.Output;
using PathService.Contracts.V1;

namespace PathService.Cli.Commands;

/// <summary>Traces one model, printing the path live, and writes the requested outputs.</summary>
internal static class TraceCommand
{
    public static async Task<int> RunAsync(IAnalysisBackend backend, TracePathRequest request, Options o, CancellationToken ct)
    {
        var rec = new PathRecorder();
        bool quiet = o.Has("quiet");
        if (!quiet) ConsoleReport.Header(request, backend.Description);
        await foreach (var r in backend.TraceAsync(request, ct))
        {
            rec.Add(r);
            if (!quiet) ConsoleReport.Live(r);
        }
        if (!quiet) ConsoleReport.Summary(rec);
        WriteOutputs(request, rec, o);
        return rec.Summary?.Completed == true ? ExitCodes.Success : ExitCodes.TargetNotReached;
    }

    public static void WriteOutputs(TracePathRequest request, PathRecorder rec, Options o)
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
        if (o.Get("out") is { } dir)
        {
            Directory.CreateDirectory(dir);
            Write(Path.Combine(dir, "path.csv"), rec.Csv);
            Write(Path.Combine(dir, "path.jsonl"), rec.JsonLines);
            Write(Path.Combine(dir, "summary.json"), rec.SummaryJson);
            Write(Path.Combine(dir, "events.csv"), rec.EventsCsv);
            Write(Path.Combine(dir, "curve.svg"), () => Pictures.Curve(request, rec, o.GetInt("plot-monitored", 1) - 1));
            Write(Path.Combine(dir, "shape.svg"), () => Pictures.Shape(request, rec, ShapePoint(o), o.GetDouble("shape-scale")));
        }
        Write(o.Get("csv"), rec.Csv);
        Write(o.Get("jsonl"), rec.JsonLines);
        Write(o.Get("summary"), rec.SummaryJson);
        Write(o.Get("svg"), () => Pictures.Curve(request, rec, o.GetInt("plot-monitored", 1) - 1));
        Write(o.Get("shape-svg"), () => Pictures.Shape(request, rec, ShapePoint(o), o.GetDouble("shape-scale")));
        foreach (var w in written) Console.WriteLine($"wrote {w}");
    }

    private static int? ShapePoint(Options o) => o.Get("shape-at") is { } s ? (int.TryParse(s, out int i) && i >= 0 ? i : throw new UsageException($"--shape-at must be a point index, not '{s}'")) : null;
}
