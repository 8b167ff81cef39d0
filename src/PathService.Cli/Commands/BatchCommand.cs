using System.Diagnostics;
using System.Globalization;
using System.Text;
using PathService.Cli.Backends;
using PathService.Cli.Output;
using System.CommandLine;
using PathService.Client;
using PathService.Client.Calls;
using PathService.Contracts.V1;

namespace PathService.Cli.Commands;

/// <summary>
/// Traces every model of a folder or glob concurrently (bounded parallelism) and writes one CSV table of critical
/// load factors, critical-point kinds and outcomes per model, with a progress bar on standard error.
/// </summary>
internal static class BatchCommand
{
    public sealed record Row(string File, string Model, string Outcome, string Reason, int Points, double MaxLoadFactor,
        double? FirstCritical, string FirstKind, int CriticalCount, double WallMs, string Error);

    public static async Task<int> RunAsync(IAnalysisBackend backend, string pattern, ParseResult o, CancellationToken ct)
    {
        var files = Expand(pattern);
        if (files.Count == 0) throw new InputException($"{pattern}: no .json or .pb model files found");
        int parallel = o.GetValue(CliOptions.ModelsAtOnce);
        var rows = new Row[files.Count];
        int done = 0;
        using var gate = new SemaphoreSlim(parallel);
        var tasks = files.Select(async (file, i) =>
        {
            await gate.WaitAsync(ct);
            try { rows[i] = await TraceOne(backend, file, ct); }
            finally
            {
                gate.Release();
                Progress(Interlocked.Increment(ref done), files.Count);
            }
        }).ToList();
        await Task.WhenAll(tasks);
        Console.Error.WriteLine();
        string csv = ToCsv(rows);
        string output = o.GetValue(CliOptions.Table) ?? "batch-summary.csv";
        File.WriteAllText(output, csv);
        Console.Write(csv);
        Console.WriteLine($"wrote {output}");
        Console.WriteLine(Cautions.Short);
        // The most telling failure decides the code: credentials, disagreeing instances, no server, refusals by limits.
        if (rows.Any(r => r.Outcome == "unauthenticated")) return ExitCodes.AuthenticationFailed;
        if (rows.Any(r => r.Outcome == "mismatch")) return ExitCodes.ReplayMismatch;
        if (rows.Any(r => r.Outcome == "unavailable")) return ExitCodes.ServerUnavailable;
        if (rows.Any(r => r.Outcome == "refused")) return ExitCodes.RefusedByLimits;
        return rows.All(r => r.Outcome == "completed") ? ExitCodes.Success : ExitCodes.SomeFailed;
    }

    private static async Task<Row> TraceOne(IAnalysisBackend backend, string file, CancellationToken ct)
    {
        var clock = Stopwatch.StartNew();
        string name = Path.GetFileName(file);
        try
        {
            var request = RequestReader.Read(file);
            var rec = new PathRecorder();
            await foreach (var r in backend.TraceAsync(request, ct)) rec.Add(r);
            var s = rec.Summary;
            var first = rec.Criticals.FirstOrDefault();
            return new Row(name, request.Model?.Name ?? "", s?.Completed == true ? "completed" : "not_reached", s is null ? "none" : Labels.Of(s.Reason),
                rec.Points.Count, s?.MaxLoadFactor ?? double.NaN, first?.LoadFactor,
                first is null ? "" : Labels.Of(first.Kind),
                rec.Criticals.Count, clock.Elapsed.TotalMilliseconds, "");
        }
        catch (AnalysisRejectedException ex) when (ex.ResourceLimit)
        {
            return new Row(name, "", "refused", "", 0, double.NaN, null, "", 0, clock.Elapsed.TotalMilliseconds, ex.Message);
        }
        catch (AuthenticationFailedException ex)
        {
            return new Row(name, "", "unauthenticated", "", 0, double.NaN, null, "", 0, clock.Elapsed.TotalMilliseconds, ex.Message);
        }
        catch (ReplayMismatchException ex)
        {
            return new Row(name, "", "mismatch", "", 0, double.NaN, null, "", 0, clock.Elapsed.TotalMilliseconds, ex.Message);
        }
        catch (Exception ex) when (ex is InputException or AnalysisRejectedException)
        {
            return new Row(name, "", "invalid", "", 0, double.NaN, null, "", 0, clock.Elapsed.TotalMilliseconds, ex.Message);
        }
        catch (BackendUnavailableException ex)
        {
            return new Row(name, "", "unavailable", "", 0, double.NaN, null, "", 0, clock.Elapsed.TotalMilliseconds, ex.Message);
        }
    }

    public static List<string> Expand(string pattern)
    {
        if (Directory.Exists(pattern))
            return Directory.GetFiles(pattern).Where(f => f.EndsWith(".json") || f.EndsWith(".pb")).Order(StringComparer.Ordinal).ToList();
        string dir = Path.GetDirectoryName(pattern) is { Length: > 0 } d ? d : ".";
        string mask = Path.GetFileName(pattern);
        return Directory.Exists(dir) ? Directory.GetFiles(dir, mask).Order(StringComparer.Ordinal).ToList() : [];
    }

    private static string ToCsv(IEnumerable<Row> rows)
    {
        var sb = new StringBuilder("file,model,outcome,stop_reason,points,max_load_factor,first_critical_load_factor,first_critical_kind,critical_points,wall_ms,error\n");
        foreach (var r in rows)
            sb.AppendLine(string.Join(',', Q(r.File), Q(r.Model), r.Outcome, r.Reason, r.Points.ToString(CultureInfo.InvariantCulture),
                N(r.MaxLoadFactor), r.FirstCritical is { } c ? N(c) : "", r.FirstKind, r.CriticalCount.ToString(CultureInfo.InvariantCulture),
                r.WallMs.ToString("F1", CultureInfo.InvariantCulture), Q(r.Error)));
        return sb.ToString();
    }

    private static string N(double v) => double.IsFinite(v) ? v.ToString("R", CultureInfo.InvariantCulture) : "";
    private static string Q(string s) => s.Contains(',') || s.Contains('"') || s.Contains('\n') ? $"\"{s.Replace("\"", "\"\"")}\"" : s;

    private static void Progress(int done, int total)
    {
        const int width = 30;
        int filled = (int)Math.Round(width * (double)done / total);
        Console.Error.Write($"\r[{new string('#', filled)}{new string('.', width - filled)}] {done}/{total}");
    }
}
