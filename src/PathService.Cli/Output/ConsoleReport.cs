using System.Globalization;
using PathService.Client;
using PathService.Contracts.V1;

namespace PathService.Cli.Output;

/// <summary>Live lines while tracing, and the closing summary table.</summary>
internal static class ConsoleReport
{
    public static void Header(TracePathRequest request, string backend)
    {
        Console.WriteLine($"tracing '{request.Model?.Name}' ({request.Model?.Nodes.Count} nodes, {request.Model?.Bars.Count} bars{(request.Model?.Beams.Count > 0 ? $", {request.Model.Beams.Count} beams" : "")}) on {backend}");
        // The displacement column is named by its component (node.axis), the first monitored one.
        var first = request.Controls?.Monitored.FirstOrDefault();
        string component = first is null ? "displacement" : $"{first.Node}.{PathRecorder.Axis(first.Direction)}";
        Console.WriteLine($"{"point",6} {"λ",14} {component,14} {"iterations",10} {"negative pivots",15}  stability");
    }

    public static void Live(TracePathResponse r)
    {
        switch (r.UpdateCase)
        {
            case TracePathResponse.UpdateOneofCase.Point:
                var p = r.Point;
                string mon = p.Monitored.Count > 0 ? p.Monitored[0].Value.ToString("G6", CultureInfo.InvariantCulture) : "";
                Console.WriteLine($"{p.Index,6} {p.LoadFactor,14:G8} {mon,14} {p.Iterations,10} {p.NegativePivots,15}  {Labels.Of(p.Stability)}");
                break;
            case TracePathResponse.UpdateOneofCase.CriticalPoint:
                var c = r.CriticalPoint;
                string kind = c.Multiplicity > 1 ? $"{Labels.Of(c.Kind)} of multiplicity {c.Multiplicity}" : Labels.Of(c.Kind);
                Console.WriteLine($"  >> {kind} #{c.Sequence} at λ = {c.LoadFactor:G10} (between points {c.PointBefore} and {c.PointAfter}, " +
                                  $"negative pivots {c.NegativePivotsBefore} → {c.NegativePivotsAfter}, load alignment {c.LoadAlignment:G3}, " +
                                  (c.Located ? $"located, estimated error {c.Tolerance:G2})" : $"NOT located: {c.LocationNote})"));
                break;
            case TracePathResponse.UpdateOneofCase.DisplacementTurn:
                var t = r.DisplacementTurn;
                string comp = t.Component is null ? "?" : $"{t.Component.Node}.{PathRecorder.Axis(t.Component.Direction)}";
                Console.WriteLine($"  ~~ {comp} turns back at {t.Component?.Value:G6} (λ = {t.LoadFactor:G8}, between points {t.PointBefore} and {t.PointAfter})");
                break;
            case TracePathResponse.UpdateOneofCase.MemberEvent:
                var me = r.MemberEvent;
                Console.WriteLine($"  !! bar {me.Bar}: {Labels.Of(me.Kind)} from λ ≈ {me.OnsetLoadFactor:G6} (axial force {me.AxialForce:G5})");
                break;
            case TracePathResponse.UpdateOneofCase.BranchStarted:
                Console.WriteLine($"  => branch {r.BranchStarted.Branch} starts at bifurcation #{r.BranchStarted.CriticalPointSequence} (λ = {r.BranchStarted.LoadFactor:G8})");
                break;
            case TracePathResponse.UpdateOneofCase.BranchEnded:
                Console.WriteLine($"  <= branch {r.BranchEnded.Branch} ended: {r.BranchEnded.Message}");
                break;
            case TracePathResponse.UpdateOneofCase.StepCut:
                Console.WriteLine($"  -- step {r.StepCut.Step} cut ({Labels.Of(r.StepCut.Reason)}): {r.StepCut.Detail}");
                break;
        }
    }

    public static void Summary(PathRecorder rec)
    {
        var s = rec.Summary;
        if (s is null) { Console.WriteLine("no summary received"); return; }
        Console.WriteLine();
        Console.WriteLine("summary");
        Row("outcome", $"{Labels.Of(s.Reason)} — {s.Message}");
        Row("points / steps / iterations", $"{s.Points} / {s.Steps} / {s.Iterations}");
        Row("step cuts", s.Cuts.ToString(CultureInfo.InvariantCulture));
        Row("largest λ reached", s.MaxLoadFactor.ToString("G8", CultureInfo.InvariantCulture));
        Row("factorisations", $"{s.Factorizations} ({s.FactorizationTime?.ToTimeSpan().TotalMilliseconds:F1} ms)");
        Row("solve refinements", s.Refinements.ToString(CultureInfo.InvariantCulture));
        Row("wall time", $"{s.WallTime?.ToTimeSpan().TotalMilliseconds:F1} ms");
        if (rec.Criticals.Count > 0)
        {
            Console.WriteLine();
            Console.WriteLine($"{"#",3} {"kind",-12} {"multiplicity",12} {"λ_cr",16} {"estimated error",15} {"bracket (λ before … after)",32} {"load alignment",14}");
            foreach (var c in rec.Criticals)
                Console.WriteLine($"{c.Sequence,3} {Labels.Of(c.Kind),-12} {Math.Max(1, c.Multiplicity),12} {c.LoadFactor,16:G10} " +
                                  $"{(c.Located ? c.Tolerance.ToString("G2", CultureInfo.InvariantCulture) : "not located"),15} {$"{c.LoadFactorBefore:G6} … {c.LoadFactorAfter:G6}",32} {c.LoadAlignment,14:G3}");
        }
        foreach (var c in rec.Criticals.Where(c => c.Sensitivity is not null))
        {
            Console.WriteLine();
            if (!c.Sensitivity.Defined) { Console.WriteLine($"design sensitivities at #{c.Sequence}: not defined ({c.Sensitivity.Note})"); continue; }
            var best = c.Sensitivity.Bars.OrderByDescending(b => b.Volume).Take(5).Where(b => b.Volume > 0).ToList();
            Console.WriteLine($"design sensitivities at #{c.Sequence} ({c.Sensitivity.Note}): members where added material raises λ_cr most, dλ_cr/dV");
            Console.WriteLine("  (a gradient is local: it predicts small changes only; re-trace a changed design to confirm)");
            foreach (var b in best) Console.WriteLine($"  {b.Bar,-20} {b.Volume,14:G5}");
            if (c.Sensitivity.HasDirectional) Console.WriteLine($"  along the design direction: dλ_cr = {c.Sensitivity.Directional:G6}");
            int breaking = c.Sensitivity.Bars.Count(b => b.BreaksBifurcation) + c.Sensitivity.Nodes.Sum(n => n.BreaksBifurcationAlong.Length)
                           + c.Sensitivity.GroundSprings.Count(s => s.BreaksBifurcation) + c.Sensitivity.LinkSprings.Count(s => s.BreaksBifurcation);
            if (breaking > 0)
                Console.WriteLine($"  {breaking} parameter(s) break the bifurcation's symmetry: their change acts as an imperfection (column breaks_bifurcation of sensitivity.csv)");
        }
        if (rec.Turns.Count > 0)
        {
            Console.WriteLine();
            Console.WriteLine("displacement turns");
            foreach (var t in rec.Turns)
                Console.WriteLine($"  #{t.Sequence} {(t.Component is null ? "?" : $"{t.Component.Node}.{PathRecorder.Axis(t.Component.Direction)}")} = {t.Component?.Value:G6} at λ = {t.LoadFactor:G8}");
        }
        Console.WriteLine();
        Console.WriteLine(Cautions.Short);
    }

    private static void Row(string name, string value) => Console.WriteLine($"  {name,-28} {value}");
}
