using System.Diagnostics;
using PathService.Bench.Models;
using PathService.Engine.Continuation;
using PathService.Engine.Model;

namespace PathService.Bench;

/// <summary>
/// One arc-length trace of a fixed number of points on a rigid-jointed single-layer lattice shell (beam elements with
/// 6 unknowns per node), timed end to end, with the counts that do not depend on the machine's load.
/// </summary>
public static class FrameCommand
{
    public static int Run(Options o)
    {
        int m = o.Int("m", 57), n = o.Int("subdivisions", 1), points = o.Int("points", 30);
        double increment = o.Double("increment", 0.05);
        Console.WriteLine($"machine: {Machine.Describe()}");
        var clock = Stopwatch.StartNew();
        var model = StructuralModel.Create(LatticeShell.Create(m, n));
        double build = clock.Elapsed.TotalSeconds;
        Console.WriteLine($"model: {model.Name}: {model.NodeCount} nodes, {model.Definition.Beams.Count} members, {model.Beams.Count} beam elements, " +
                          $"{model.Dofs.FullCount} unknowns, {model.Dofs.FreeCount} free");
        var controls = new SolverControls
        {
            Method = ContinuationMethod.ArcLength,
            InitialLoadIncrement = increment,
            MaxPoints = points,
            Monitored = [new DofReference(LatticeShell.CentreNodeId(m), Axis.Z)],
            DetectCriticalPoints = o.String("critical", "on") == "on",
        };
        PathSummary? summary = null;
        int critical = 0;
        var trace = Stopwatch.StartNew();
        foreach (var e in new PathTracer(model, controls).Trace())
        {
            switch (e)
            {
                case PathPoint p when o.String("digits", "off") == "on":
                    Console.WriteLine($"  digits {p.Index,3}  λ = {p.LoadFactor:R}  w = {p.Monitored[0]:R}  neg {p.NegativePivots}");
                    break;
                case CriticalPoint c:
                    critical++;
                    Console.WriteLine($"  critical point: {c.Kind} λ = {c.LoadFactor:G8} (located {c.Located})");
                    break;
                case PathSummary s:
                    summary = s;
                    break;
            }
        }
        double wall = trace.Elapsed.TotalSeconds;
        var sum = summary!;
        Console.WriteLine($"trace: {sum.Points} points, {sum.Steps} steps, {sum.Cuts} cuts, {critical} critical points, stop: {sum.Reason}; final λ = {sum.FinalLoadFactor:G8}");
        Console.WriteLine($"  iterations {sum.Iterations}, factorisations {sum.Factorizations}, factorisation time {sum.FactorizationTime.TotalSeconds:F2} s");
        Console.WriteLine($"  model build {build:F2} s, trace wall {wall:F2} s");
        return 0;
    }
}
