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
            FullStateAtEnd = true,
        };
        double[]? final = null;
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
                case PathPoint p when p.State is { } st:
                    final = st.Displacements;
                    break;
                case CriticalPoint c:
                    critical++;
                    Console.WriteLine($"  critical point: {c.Kind} λ = {c.LoadFactor:G8} (located {c.Located}, estimated error {c.Tolerance:E1}, count {c.NegativePivotsBefore} → {c.NegativePivotsAfter}){(c.Located ? "" : ": " + c.LocationNote)}");
                    break;
                case StepCut cut:
                    Console.WriteLine($"  step cut: step {cut.Step}, attempt {cut.Attempt}, {cut.Reason}");
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

        // One assembly of each kind, alone, at the last point (after the trace: JIT done), median of a few repeats.
        clock.Restart();
        var asm = new PathService.Engine.Assembly.StructureAssembler(model);
        Console.WriteLine($"assembler set-up {clock.Elapsed.TotalSeconds:F2} s");
        var u = final ?? new double[model.Dofs.FullCount];
        var values = new double[asm.Pattern.NonZeroCount];
        var force = new double[model.Dofs.FullCount];
        double Median(Action a)
        {
            var t = new List<double>();
            for (int r = 0; r < 7; r++) { var c = Stopwatch.StartNew(); a(); t.Add(c.Elapsed.TotalMilliseconds); }
            t.Sort();
            return t[3];
        }
        double tangent = Median(() => asm.Tangent(u, values)), internalForce = Median(() => asm.InternalForce(u, force));
        Console.WriteLine($"assembly: tangent {tangent,8:F2} ms, internal force {internalForce,8:F2} ms ({1e3 * tangent / model.Beams.Count:F2} µs and {1e3 * internalForce / model.Beams.Count:F2} µs per element)");
        return 0;
    }
}
