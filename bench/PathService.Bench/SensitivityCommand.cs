using System.Diagnostics;
using PathService.Bench.Models;
using PathService.Engine.Continuation;
using PathService.Engine.Model;
using PathService.Engine.Stability;

namespace PathService.Bench;

/// <summary>
/// Cost of the design sensitivities of one critical point against one factorisation of the same tangent: the m × m
/// roof is traced to its first critical point (full state kept), then the tangent there is factorised and all
/// sensitivities (every bar's area and modulus, every node's coordinates, every spring) are computed with that
/// factorisation in place, both timed several times (median).
/// </summary>
public static class SensitivityCommand
{
    public static int Run(Options o)
    {
        int m = o.Int("m", 60), repeats = o.Int("repeats", 7);
        Console.WriteLine($"machine: {Machine.Describe()}");
        var model = StructuralModel.Create(SpaceTrussRoof.Create(m));
        var controls = new SolverControls
        {
            Method = ContinuationMethod.ArcLength, InitialLoadIncrement = o.Double("increment", 0.05), MaxPoints = o.Int("points", 60),
            Monitored = [new DofReference(SpaceTrussRoof.CentreNodeId(m), Axis.Z)],
            StopAtFirstCriticalPoint = true, FullStateAtCriticalPoints = true,
        };
        var cp = new PathTracer(model, controls).Trace().OfType<CriticalPoint>().FirstOrDefault();
        if (cp?.State is null)
        {
            Console.Error.WriteLine("no critical point within the points allowed; raise --points or --increment");
            return 1;
        }
        Console.WriteLine($"roof m = {m}: {model.Dofs.FreeCount} equations, {model.BarCount} bars; first critical point {cp.Kind} at λ = {cp.LoadFactor:G10} (located {cp.Located})");
        var sys = new EquilibriumSystem(model, controls.SingularPivotRatio);
        var mode = new double[sys.FreeCount];
        model.Dofs.Gather(cp.Mode, mode);
        var u = cp.State.Displacements;
        var factor = new List<double>();
        var sensitivity = new List<double>();
        CriticalLoadSensitivity? result = null;
        for (int r = 0; r < repeats; r++)
        {
            long t0 = Stopwatch.GetTimestamp();
            sys.Refactor(u);
            factor.Add(Stopwatch.GetElapsedTime(t0).TotalMilliseconds);
            t0 = Stopwatch.GetTimestamp();
            result = SensitivityAnalysis.Compute(sys, u, cp.LoadFactor, [mode], cp.Kind, factorAtU: true);
            sensitivity.Add(Stopwatch.GetElapsedTime(t0).TotalMilliseconds);
        }
        var solve = new List<double>();
        var rhs = new double[sys.FreeCount];
        for (int r = 0; r < repeats; r++)
        {
            Array.Copy(mode, rhs, rhs.Length);
            long t0 = Stopwatch.GetTimestamp();
            sys.Factor.Solve(rhs);
            solve.Add(Stopwatch.GetElapsedTime(t0).TotalMilliseconds);
        }
        double f = Median(factor), s = Median(sensitivity);
        Console.WriteLine($"of which one checked solve (the adjoint at a bifurcation): {Median(solve),9:F1} ms (median of {repeats})");
        Console.WriteLine($"one factorisation (assembly + LDLᵀ):   {f,9:F1} ms (median of {repeats})");
        Console.WriteLine($"all sensitivities ({result!.Method}):   {s,9:F1} ms (median of {repeats}); ratio {s / f:F2} (target < 1)");
        Console.WriteLine($"parameters: {model.BarCount} areas, {model.BarCount} moduli, {3 * model.NodeCount} coordinates; defined: {result.Defined} ({result.Note})");
        if (result.Defined)
        {
            var top = Enumerable.Range(0, model.BarCount).OrderByDescending(b => result.BarVolume[b]).Take(5);
            Console.WriteLine("members where added material raises λ_cr most (dλ/dV, 1/m³): " + string.Join(", ", top.Select(b => $"{model.BarIds[b]} {result.BarVolume[b]:G4}")));
        }
        return 0;
    }

    private static double Median(List<double> v)
    {
        var s = v.OrderBy(x => x).ToList();
        return s[s.Count / 2];
    }
}
