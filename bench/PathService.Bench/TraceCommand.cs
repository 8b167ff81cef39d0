using System.Diagnostics;
using PathService.Bench.Models;
using PathService.Engine.Assembly;
using PathService.Engine.Continuation;
using PathService.Engine.Model;
using PathService.Engine.Sparse;

namespace PathService.Bench;

/// <summary>
/// One arc-length trace of a fixed number of points on the m x m roof, timed end to end, then the cost of each
/// part of an iteration measured on its own (assembly, residual, factorisation, solves).
/// </summary>
public static class TraceCommand
{
    public static int Run(Options o)
    {
        int m = o.Int("m", 60), points = o.Int("points", 30), repeats = o.Int("repeats", 15);
        var defaults = new SolverControls();
        double increment = o.Double("increment", defaults.InitialLoadIncrement);
        bool verbose = o.String("verbose", "false") == "true";
        bool digits = o.String("digits", "off") == "on";
        var process = Process.GetCurrentProcess();
        Console.WriteLine($"machine: {Machine.Describe()}");

        // The trace, first thing in the process so that the wall time below includes start-up and JIT.
        var clock = Stopwatch.StartNew();
        var model = StructuralModel.Create(SpaceTrussRoof.Create(m));
        double buildTime = clock.Elapsed.TotalSeconds;
        var controls = new SolverControls
        {
            Method = ContinuationMethod.ArcLength,
            InitialLoadIncrement = increment,
            MaxPoints = points,
            Monitored = [new DofReference(SpaceTrussRoof.CentreNodeId(m), Axis.Z)],
            // Default as the engine's own (on): --critical off measures the trace without location.
            DetectCriticalPoints = o.String("critical", defaults.DetectCriticalPoints ? "on" : "off") == "on",
            // --stop-at-first on: the trace ends at the first critical point (its verdict located), as a caller who only
            // needs the lowest critical load asks with stop_at_first_critical_point.
            StopAtFirstCriticalPoint = o.String("stop-at-first", defaults.StopAtFirstCriticalPoint ? "on" : "off") == "on",
            // --max-located N: locate the first N critical points, report later count changes per step unresolved
            // (max_located_critical_points); unset as the engine's default (every one).
            MaxLocatedCriticalPoints = o.Int("max-located", -1) is var limit and >= 0 ? limit : defaults.MaxLocatedCriticalPoints,
        };
        long allocatedBefore = GC.GetTotalAllocatedBytes(true);
        PathSummary? summary = null;
        int critical = 0, cuts = 0, unresolved = 0;
        double firstPoint = 0;
        long allocatedAtFirst = 0, allocatedAtSecond = 0;
        var traceClock = Stopwatch.StartNew();
        foreach (var e in new PathTracer(model, controls).Trace())
        {
            switch (e)
            {
                case PathPoint p:
                    if (p.Index == 0) { firstPoint = traceClock.Elapsed.TotalSeconds; allocatedAtFirst = GC.GetTotalAllocatedBytes(true); }
                    if (p.Index == 1) allocatedAtSecond = GC.GetTotalAllocatedBytes(true);
                    if (verbose) Console.WriteLine($"    allocated so far {(GC.GetTotalAllocatedBytes(true) - allocatedBefore) / 1e3:F1} kB");
                    if (digits) Console.WriteLine($"  digits {p.Index,3}  λ = {p.LoadFactor:R}  w = {p.Monitored[0]:R}");
                    if (verbose) Console.WriteLine($"  point {p.Index,3}  λ = {p.LoadFactor,10:G6}  w = {p.Monitored[0],10:G5}  its {p.Iterations}  neg {p.NegativePivots}");
                    break;
                case CriticalPoint c:
                    critical++;
                    if (c.Kind == CriticalPointKind.Unresolved) unresolved++;
                    if (verbose || digits) Console.WriteLine($"  critical point: {c.Kind} λ = {(digits ? c.LoadFactor.ToString("R") : c.LoadFactor.ToString("G8"))}, count {c.NegativePivotsBefore} → {c.NegativePivotsAfter}, estimated error {c.Tolerance:E1}{(c.Located ? "" : ", not located: " + c.LocationNote)}");
                    break;
                case StepCut c:
                    cuts++;
                    if (verbose) Console.WriteLine($"  cut: step {c.Step} attempt {c.Attempt} {c.Reason} after {c.Iterations} iterations");
                    break;
                case PathSummary sum:
                    summary = sum;
                    break;
            }
        }
        double traceWall = traceClock.Elapsed.TotalSeconds;
        double processWall = (DateTime.Now - process.StartTime).TotalSeconds;
        long allocated = GC.GetTotalAllocatedBytes(true) - allocatedBefore;
        process.Refresh();
        long peakAfterTrace = process.PeakWorkingSet64;
        // CPU time of the process up to here: on a host shared with other work the wall time says little on its own.
        double processCpu = process.TotalProcessorTime.TotalSeconds;
        var s = summary!;
        int iterations = s.Iterations;
        int converged = s.Points - 1;

        // Parts of an iteration, measured alone on the same model.
        clock.Restart();
        var asm = new StructureAssembler(model);
        double assemblerSetup = clock.Elapsed.TotalSeconds;
        var symbolic = OrderingChoice.Analyze(model, asm.Pattern, OrderingMethod.Automatic); // as the trace chose
        clock.Restart();
        var factor = new SupernodalLdlFactorization(symbolic);
        double supernodalSetup = clock.Elapsed.TotalSeconds;
        var values = new double[asm.Pattern.NonZeroCount];
        var u = new double[3 * model.NodeCount];
        var force = new double[3 * model.NodeCount];
        double tTangent = Measure.MedianSeconds(() => asm.Tangent(u, values), repeats);
        double tForce = Measure.MedianSeconds(() => asm.InternalForce(u, force), repeats);
        double tFactor = Measure.MedianSeconds(() => factor.Factorize(values), repeats);
        var b1 = new double[asm.Pattern.Size];
        var b2 = new double[asm.Pattern.Size];
        model.Dofs.Gather(model.ReferenceLoad, b1);
        double tSolve = Measure.MedianSeconds(() => factor.Solve(b1), repeats);
        double tSolve2 = Measure.MedianSeconds(() => factor.Solve2(b1, b2), repeats);
        // The same two-column solve through the backward-error check the engine puts on every solve.
        var refined = new RefinedFactorization(new SupernodalLdlFactorization(symbolic));
        refined.Factorize(values);
        double tSolve2Checked = Measure.MedianSeconds(() => { model.Dofs.Gather(model.ReferenceLoad, b1); b2.AsSpan().Fill(1.0); refined.Solve2(b1, b2); }, repeats);
        double tSolve2Plain = Measure.MedianSeconds(() => { model.Dofs.Gather(model.ReferenceLoad, b1); b2.AsSpan().Fill(1.0); factor.Solve2(b1, b2); }, repeats);
        double flops = symbolic.FactorFlopCount;
        long nnzFull = 2L * asm.Pattern.NonZeroCount - asm.Pattern.Size;

        Console.WriteLine($"model: double-layer roof m = {m}: {model.NodeCount} nodes, {model.BarCount} bars, {asm.Pattern.Size} DOFs");
        Console.WriteLine($"tangent: {asm.Pattern.NonZeroCount} stored (upper) nonzeros, {nnzFull} in the full matrix");
        Console.WriteLine($"factor: nnz(L) = {symbolic.FactorNonZeroCount} ({symbolic.Ordering}), {factor.StoredEntryCount} stored in {factor.SupernodeCount} supernodes, largest front {factor.MaxFrontSize}");
        Console.WriteLine($"ordering ({symbolic.Ordering}) {Measure.Ms(symbolic.OrderingTime.TotalSeconds)}, symbolic {Measure.Ms(symbolic.SymbolicTime.TotalSeconds)}, supernodal analysis {Measure.Ms(supernodalSetup)}, assembler set-up {Measure.Ms(assemblerSetup)}");
        Console.WriteLine($"numeric factorisation {Measure.Ms(tFactor)}  ({flops:E3} flops, {flops / tFactor / 1e9:F2} GFlop/s, {factor.Threads} threads, {factor.TaskCount} subtree tasks)");
        Console.WriteLine($"assembly: tangent {Measure.Ms(tTangent)}, internal force {Measure.Ms(tForce)}; solve 1 rhs {Measure.Ms(tSolve)}, 2 rhs {Measure.Ms(tSolve2)} ({factor.SolveTaskCount} subtree tasks holding {100 * factor.SolveParallelShare:F0} % of L)");
        Console.WriteLine($"checked Solve2 (backward error + refinement when needed) {Measure.Ms(tSolve2Checked)} against {Measure.Ms(tSolve2Plain)} unchecked; " +
            $"backward error at u = 0 {refined.LargestBackwardError:E1}, refinement steps {refined.RefinementSteps}");
        double rest2 = tTangent + tForce + 2 * tSolve, rest1 = tTangent + tForce + tSolve2;
        Console.WriteLine($"per iteration besides the factorisation: {Measure.Ms(rest2)} = {100 * rest2 / tFactor:F0} % of it with two solves, {Measure.Ms(rest1)} = {100 * rest1 / tFactor:F0} % with Solve2");
        // The same parts interleaved, one iteration after another, so that each ratio compares parts timed under the
        // same machine conditions (this shared VM's speed drifts by up to 2x within minutes).
        var ratios = Measure.IterationRatios(() => asm.Tangent(u, values), () => asm.InternalForce(u, force),
            () => factor.Factorize(values), () => factor.Solve2(b1, b2), Math.Max(repeats, 21));
        Console.WriteLine($"interleaved iterations ({ratios.Length}): (tangent + internal force + Solve2) / factorisation median {100 * ratios[ratios.Length / 2]:F0} %, range {100 * ratios[0]:F0}–{100 * ratios[^1]:F0} %");
        var copyTarget = new double[values.Length];
        var solveRatios = Measure.PairedRatios(() => factor.Solve2(b1, b2), () => refined.Solve2(b1, b2), 101);
        Console.WriteLine($"interleaved Solve2 (101): checked / plain median {100 * solveRatios[50]:F0} %");
        // A whole iteration with the plain factor against one with the checked factor (copy of the values at the
        // factorisation, backward error of both solutions), interleaved.
        var checkedRatios = Measure.PairedRatios(
            () => { asm.Tangent(u, values); asm.InternalForce(u, force); factor.Factorize(values); factor.Solve2(b1, b2); },
            () => { asm.Tangent(u, values); asm.InternalForce(u, force); refined.Factorize(values); refined.Solve2(b1, b2); },
            Math.Max(repeats, 21));
        Console.WriteLine($"interleaved iterations ({checkedRatios.Length}): checked / plain median {100 * checkedRatios[checkedRatios.Length / 2]:F1} %, " +
            $"quartiles {100 * checkedRatios[checkedRatios.Length / 4]:F1}–{100 * checkedRatios[3 * checkedRatios.Length / 4]:F1} %");
        Console.WriteLine($"trace: arc length, critical-point location {(controls.DetectCriticalPoints ? "on" : "off")}{(controls.MaxLocatedCriticalPoints is { } max ? $" for the first {max} critical points" : "")}, first load increment {increment}");
        Console.WriteLine($"trace: {s.Points} points ({converged} converged after the start), {s.Steps} steps, {cuts} cuts, {critical} critical points{(unresolved > 0 ? $" ({unresolved} of them steps left unresolved past the limit)" : "")}, stop: {s.Reason}");
        Console.WriteLine($"  solves refined by the backward-error check: {s.Refinements} refinement steps");
        Console.WriteLine($"  iterations {iterations} ({(double)iterations / Math.Max(1, converged):F2} per point), factorisations {s.Factorizations} ({(double)s.Factorizations / Math.Max(1, converged):F2} per point)");
        Console.WriteLine($"  factorisation time {s.FactorizationTime.TotalSeconds:F2} s ({s.FactorizationTime.TotalSeconds / Math.Max(1, s.Factorizations) * 1000:F1} ms each), rest {traceWall - s.FactorizationTime.TotalSeconds:F2} s");
        double outside = (s.CriticalPointTime - s.CriticalPointFactorizationTime).TotalSeconds;
        Console.WriteLine($"  critical points: {s.CriticalPointFactorizations} factorisations ({(double)s.CriticalPointFactorizations / Math.Max(1, critical - unresolved):F2} per located point), {s.CriticalPointSolves} solves, " +
            $"{s.CriticalPointTime.TotalSeconds:F2} s in all, outside factorisations {outside:F2} s = {100 * outside / traceWall:F1} % of the trace wall");
        Console.WriteLine($"  model build {buildTime:F2} s, first point after {firstPoint:F2} s, trace wall {traceWall:F2} s, process wall including start-up {processWall:F2} s, process CPU {processCpu:F1} s");
        Console.WriteLine($"  allocated during the trace {allocated / 1e6:F1} MB: set-up and first point {(allocatedAtFirst - allocatedBefore) / 1e6:F1} MB, " +
            $"second point {(allocatedAtSecond - allocatedAtFirst) / 1e6:F2} MB (first-use buffers), then {(allocatedBefore + allocated - allocatedAtSecond) / 1e3 / Math.Max(1, iterations - 2):F1} kB per iteration (points and events included)");
        var gc = GC.GetGCMemoryInfo();
        Console.WriteLine($"memory: peak working set {peakAfterTrace / 1e6:F0} MB after the trace; factor arrays {factor.MemoryBytes / 1e6:F0} MB; GC heap {gc.HeapSizeBytes / 1e6:F0} MB, collections gen0/1/2 {GC.CollectionCount(0)}/{GC.CollectionCount(1)}/{GC.CollectionCount(2)}, GC pauses {GC.GetTotalPauseDuration().TotalSeconds:F2} s in all");
        return s.Completed ? 0 : 1;
    }
}
