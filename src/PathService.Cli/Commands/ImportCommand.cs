using System.CommandLine;
using Google.Protobuf;
using PathService.Cli.Backends;
using PathService.Cli.Output;
using PathService.Client;
using PathService.Contracts.V1;
using static PathService.Cli.CliOptions;

namespace PathService.Cli.Commands;

/// <summary>
/// import: reads the structural analysis view of an IFC file (in this process, or on the server with --server) and
/// writes a request file that trace, check, linear and buckling read as they are: the model, the load case and empty
/// solver controls (every control at its documented default).
/// </summary>
internal static class ImportCommand
{
    private static readonly JsonFormatter Formatter = new(JsonFormatter.Settings.Default.WithIndentation());

    public static async Task<int> RunAsync(IAnalysisBackend b, string path, ParseResult o, CancellationToken ct)
    {
        byte[] bytes;
        try { bytes = await File.ReadAllBytesAsync(path, ct); }
        catch (Exception ex) when (ex is IOException or UnauthorizedAccessException) { throw new InputException($"{path}: {ex.Message}"); }
        var request = new ImportIfcModelRequest
        {
            IfcFile = ByteString.CopyFrom(bytes),
            AnalysisModel = o.GetValue(AnalysisModel) ?? "",
            ReferenceLoadGroup = o.GetValue(ReferenceLoadGroup) ?? "",
            ConstantLoadGroup = o.GetValue(ConstantLoadGroup) ?? "",
            Units = new UnitLabels { Force = o.GetValue(ForceUnit)!, Length = o.GetValue(LengthUnit)! },
        };
        var res = await b.ImportIfcAsync(request, ct);
        string outPath = o.GetValue(ImportOut) ?? Path.ChangeExtension(path, ".json");
        var trace = new TracePathRequest { Model = res.Model, LoadCase = res.LoadCase, Controls = new SolverControls() };
        await File.WriteAllTextAsync(outPath, Formatter.Format(trace) + Environment.NewLine, ct);

        int errors = res.Findings.Count(f => f.Severity == FindingSeverity.Error);
        Console.WriteLine($"read '{res.Model.Name}' ({res.Schema}): {res.Model.Nodes.Count} nodes, {res.Model.Bars.Count} bars, " +
            $"{res.LoadCase.Reference.Count} reference and {res.LoadCase.Constant.Count} constant loads; wrote {outPath}");
        Console.WriteLine($"units: {res.UnitsNote}");
        foreach (var f in res.Findings) Console.WriteLine($"  {Labels.Of(f.Severity),-8} {f.Code,-26} {f.ItemId,-14} {f.Message}");
        if (errors > 0) Console.WriteLine($"{errors} error finding(s): the model is incomplete; complete it before analysing it");
        Console.WriteLine(Cautions.Short);
        // An incomplete model is invalid input for a pipeline, although the file is written for inspection.
        return errors > 0 ? ExitCodes.InvalidInput : ExitCodes.Success;
    }
}
