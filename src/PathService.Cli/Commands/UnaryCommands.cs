using System.Globalization;
using Google.Protobuf;
using PathService.Cli.Backends;
using PathService.Cli.Output;
using System.CommandLine;
using PathService.Client;
using PathService.Contracts.V1;
using static PathService.Cli.CliOptions;

namespace PathService.Cli.Commands;

/// <summary>check, linear and buckling: one request, one answer, printed as a table (or JSON with --json).</summary>
internal static class UnaryCommands
{
    private static readonly JsonFormatter Formatter = new(JsonFormatter.Settings.Default.WithFormatDefaultValues(true));

    public static async Task<int> CheckAsync(IAnalysisBackend b, TracePathRequest r, ParseResult o, CancellationToken ct)
    {
        var res = await b.CheckAsync(new CheckModelRequest { Model = r.Model, LoadCase = r.LoadCase, Controls = r.Controls }, ct);
        if (o.GetValue(Json) is { } json) File.WriteAllText(json, Formatter.Format(res));
        Console.WriteLine(res.Valid ? $"model '{r.Model?.Name}' is valid" : $"model '{r.Model?.Name}' has errors");
        foreach (var f in res.Findings) Console.WriteLine($"  {Labels.Of(f.Severity),-8} {f.Field,-36} {f.ItemId,-14} {f.Message}");
        return res.Valid ? ExitCodes.Success : ExitCodes.InvalidInput;
    }

    public static async Task<int> LinearAsync(IAnalysisBackend b, TracePathRequest r, ParseResult o, CancellationToken ct)
    {
        var req = new AnalyzeLinearRequest { Model = r.Model, LoadCase = r.LoadCase };
        if (o.GetValue(LoadFactor) is { } lf) req.LoadFactor = lf;
        var res = await b.LinearAsync(req, ct);
        if (o.GetValue(Json) is { } json) File.WriteAllText(json, Formatter.Format(res));
        string f = res.Units?.Force ?? "", l = res.Units?.Length ?? "";
        Console.WriteLine($"linear analysis of '{r.Model?.Name}' at λ = {res.LoadFactor.ToString("G6", CultureInfo.InvariantCulture)}");
        Console.WriteLine($"{"bar",-14} {"axial force [" + f + "]",18}");
        foreach (var bar in res.State.Bars) Console.WriteLine($"{bar.Bar,-14} {bar.AxialForce,18:G8}");
        Console.WriteLine($"{"node",-14} {"ux",14} {"uy",14} {"uz",14}  [{l}]");
        foreach (var n in res.State.Nodes) Console.WriteLine($"{n.Node,-14} {n.Ux,14:G6} {n.Uy,14:G6} {n.Uz,14:G6}");
        Console.WriteLine(Cautions.Short);
        return ExitCodes.Success;
    }

    public static async Task<int> BucklingAsync(IAnalysisBackend b, TracePathRequest r, ParseResult o, CancellationToken ct)
    {
        var req = new FindBucklingModesRequest { Model = r.Model, LoadCase = r.LoadCase, ModeCount = o.GetValue(ModeCount) };
        var res = await b.BucklingAsync(req, ct);
        if (o.GetValue(Json) is { } json) File.WriteAllText(json, Formatter.Format(res));
        Console.WriteLine($"linearised buckling of '{r.Model?.Name}' ({res.Iterations} subspace iterations{(res.Converged ? "" : ", NOT converged")})");
        Console.WriteLine($"{"mode",5} {"load factor",16} {"load alignment",16}");
        foreach (var m in res.Modes) Console.WriteLine($"{m.Number,5} {m.LoadFactor,16:G8} {m.LoadAlignment,16:G3}");
        Console.WriteLine("Linearised buckling ignores pre-buckling deformation and can overestimate the load of snapping structures; trace the path.");
        Console.WriteLine(Cautions.Short);
        return ExitCodes.Success;
    }
}
