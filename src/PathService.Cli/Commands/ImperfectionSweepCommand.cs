using System.Globalization;
using System.Text;
using PathService.Cli.Backends;
using PathService.Cli.Output;
using PathService.Cli.Plots;
using System.CommandLine;
using PathService.Client;
using PathService.Contracts.V1;
using static PathService.Cli.CliOptions;

namespace PathService.Cli.Commands;

/// <summary>
/// The imperfection sweep (knock-down curve): the first critical load of the structure with imperfections of growing
/// amplitude, shaped as buckling modes (--modes 1,2 --weights 1,0.5) and given as lengths or span fractions
/// (--amplitude-unit span-fraction; span/300 to span/500 is common practice, no source: check the governing code).
/// </summary>
internal static class ImperfectionSweepCommand
{
    public static async Task<int> RunAsync(IAnalysisBackend backend, TracePathRequest trace, ParseResult o, CancellationToken ct)
    {
        var amplitudes = o.GetValue(Amplitudes)!;
        string unit = o.GetValue(AmplitudeUnitName)!;
        var imperfection = new Imperfection
        {
            AmplitudeUnit = unit == "span-fraction" ? AmplitudeUnit.SpanFraction : AmplitudeUnit.Length,
            DeclaredSpan = o.GetValue(Span) ?? 0,
        };
        imperfection.BucklingModes.AddRange(o.GetValue(Modes)!);
        if (o.GetValue(Weights) is { Count: > 0 } w) imperfection.Weights.AddRange(w);
        var request = new SweepImperfectionsRequest { Model = trace.Model, LoadCase = trace.LoadCase, Controls = trace.Controls, Imperfection = imperfection };
        request.Amplitudes.AddRange(amplitudes);

        double? perfect = null;
        var rows = new List<SweepResult>();
        Console.WriteLine($"imperfection sweep of '{trace.Model?.Name}' on {backend.Description}: modes {string.Join(",", imperfection.BucklingModes)}, amplitude unit {unit}");
        await foreach (var r in backend.SweepAsync(request, ct))
        {
            if (r.UpdateCase == SweepImperfectionsResponse.UpdateOneofCase.Reference)
            {
                perfect = r.Reference.HasCriticalLoadFactor ? r.Reference.CriticalLoadFactor : null;
                Console.WriteLine($"  perfect structure: {(perfect is { } p ? $"{Labels.Of(r.Reference.Kind)} at λ = {p:G8}" : $"no critical point ({Labels.Of(r.Reference.Reason)})")}");
            }
            else
            {
                var s = r.Result;
                rows.Add(s);
                Console.WriteLine($"  amplitude {s.Amplitude,12:G5}: {(s.HasCriticalLoadFactor ? $"{Labels.Of(s.Kind)} at λ = {s.CriticalLoadFactor:G8}, knock-down {(s.HasKnockDown ? s.KnockDown.ToString("F4", CultureInfo.InvariantCulture) : "-")}" : $"no critical point ({Labels.Of(s.Reason)})")}");
            }
        }
        if (o.GetValue(SweepOut) is { } dir)
        {
            Directory.CreateDirectory(dir);
            var csv = new StringBuilder("amplitude,critical_load_factor,kind,knock_down,stop_reason\n");
            foreach (var s in rows)
                csv.AppendLine(string.Join(',', s.Amplitude.ToString("R", CultureInfo.InvariantCulture),
                    s.HasCriticalLoadFactor ? s.CriticalLoadFactor.ToString("R", CultureInfo.InvariantCulture) : "", Labels.Of(s.Kind),
                    s.HasKnockDown ? s.KnockDown.ToString("R", CultureInfo.InvariantCulture) : "", Labels.Of(s.Reason)));
            File.WriteAllText(Path.Combine(dir, "knockdown.csv"), csv.ToString());
            string length = string.IsNullOrWhiteSpace(trace.Model?.Units?.Length) ? "m" : trace.Model.Units.Length;
            File.WriteAllText(Path.Combine(dir, "knockdown.svg"), KnockDownPlot.Render(new KnockDownInput(
                $"{trace.Model?.Name}: imperfection sensitivity", $"imperfection amplitude [{length}]", perfect,
                // The perfect structure is the curve's point at zero amplitude.
                (perfect is { } p0 ? new[] { new KnockDownPoint(0, p0) } : [])
                    .Concat(rows.Where(s => s.HasCriticalLoadFactor).Select(s => new KnockDownPoint(s.Amplitude, s.CriticalLoadFactor))).ToList(),
                Cautions.Short)));
            Console.WriteLine($"wrote {Path.Combine(dir, "knockdown.csv")} and {Path.Combine(dir, "knockdown.svg")}");
        }
        Console.WriteLine(Cautions.Short);
        return rows.Count == amplitudes.Count && rows.All(r => r.HasCriticalLoadFactor) ? ExitCodes.Success : ExitCodes.TargetNotReached;
    }

}
