// The process-wide compute-thread budget: a parallel kernel borrows helpers only from what the running analyses leave,
// runs alone when the budget is spent, and gives the same bits either way.

using PathService.Bench.Models;
using PathService.Engine.Assembly;
using PathService.Engine.Model;
using PathService.Engine.Sparse;

namespace PathService.Engine.Tests.Sparse;

/// <summary>The budget is process-wide: tests that read its use must not run beside traces of other test classes.</summary>
[CollectionDefinition(Name, DisableParallelization = true)]
public sealed class ComputeBudgetCollection
{
    public const string Name = "compute budget (runs alone)";
}

[Collection(ComputeBudgetCollection.Name)]
public class ComputeBudgetTests
{
    /// <summary>Records which participants ran.</summary>
    private sealed class Recorder : ITeamWork
    {
        public readonly int[] Ran = new int[8];
        public void Execute(int participant) => Interlocked.Increment(ref Ran[participant]);
    }

    /// <summary>Occupies the whole budget (as that many running analyses would) until disposed.</summary>
    private static IDisposable SpendBudget()
    {
        var held = Enumerable.Range(0, ComputeBudget.Capacity).Select(_ => ComputeBudget.EnterAnalysis()).ToList();
        return new Disposer(() => held.ForEach(h => h.Dispose()));
    }

    private sealed class Disposer(Action a) : IDisposable
    {
        public void Dispose() => a();
    }

    [Fact]
    public void A_team_runs_on_the_calling_thread_alone_while_the_budget_is_spent_and_gives_borrowed_helpers_back()
    {
        var team = new WorkerTeam(3);
        var work = new Recorder();
        using (SpendBudget())
        {
            int inUse = ComputeBudget.InUse;
            Assert.True(inUse >= ComputeBudget.Capacity);
            team.Run(work, 3);
            Assert.Equal(1, team.Participants);
            Assert.Equal([1, 0, 0], work.Ran[..3]);
            // Nothing was borrowed, so nothing is left over.
            Assert.Equal(inUse, ComputeBudget.InUse);
        }
    }

    [Fact]
    public void Borrowing_grants_at_most_what_is_left_and_returning_restores_it()
    {
        using (SpendBudget())
        {
            Assert.Equal(0, ComputeBudget.TryBorrow(4));
        }
        // With the budget free again (other tests may borrow meanwhile), a grant never exceeds the request or the capacity.
        int granted = ComputeBudget.TryBorrow(ComputeBudget.Capacity + 5);
        try { Assert.InRange(granted, 0, ComputeBudget.Capacity); }
        finally { ComputeBudget.Return(granted); }
    }

    [Fact]
    public void Factorisation_solve_and_parallel_assembly_give_the_same_bits_with_or_without_helpers()
    {
        // 40×40 roof: above the assembler's parallel threshold (4,000 bars) and with many subtree tasks.
        var model = StructuralModel.Create(SpaceTrussRoof.Create(40));
        var rng = new Random(11);
        var u = new double[3 * model.NodeCount];
        for (int e = 0; e < model.Dofs.FreeCount; e++) u[model.Dofs.FullOf[e]] = 0.01 * (rng.NextDouble() - 0.5);
        var symbolic = LdlSymbolic.Analyze(new StructureAssembler(model).Pattern);
        var b = SparseTestMatrices.RandomVector(model.Dofs.FreeCount, 7);

        (double[] Tangent, double[] Force, double[] X) Run()
        {
            var asm = new StructureAssembler(model);
            var k = new double[asm.Pattern.NonZeroCount];
            asm.Tangent(u, k);
            var f = new double[3 * model.NodeCount];
            asm.InternalForce(u, f);
            var factor = new SupernodalLdlFactorization(symbolic, 3);
            Assert.NotEqual(LdlStatus.ZeroPivot, factor.Factorize(k));
            var x = (double[])b.Clone();
            factor.Solve(x);
            return (k, f, x);
        }

        var free = Run();
        (double[] Tangent, double[] Force, double[] X) starved;
        using (SpendBudget()) starved = Run();
        Assert.Equal(free.Tangent, starved.Tangent); // exact equality, element by element
        Assert.Equal(free.Force, starved.Force);
        Assert.Equal(free.X, starved.X);
    }

    /// <summary>
    /// Design sensitivities at a bifurcation (the post held by two equal springs, a double point) give the same bits
    /// with helpers and with the budget spent (each bar's values are computed alone and summed into nodes in bar order).
    /// </summary>
    [Fact]
    public void Sensitivities_are_bit_identical_with_and_without_helper_threads()
    {
        var def = PathService.Engine.Tests.TestModels.SpringHeldPost(3.0, 5.0e4, 40.0, 10.0) with
        {
            GroundSprings = [new GroundSpringDefinition("x", "top", Axis.X, 40.0), new GroundSpringDefinition("z", "top", Axis.Z, 40.0)],
            Supports = [.. PathService.Engine.Tests.TestModels.Pin("base")],
        };
        var model = StructuralModel.Create(def);
        var cp = new Continuation.PathTracer(model, new Continuation.SolverControls
        {
            InitialLoadIncrement = 1.0, TargetLoadFactor = 15, MaxPoints = 200, StopAtFirstCriticalPoint = true, DesignSensitivities = true,
        }).Trace().OfType<Continuation.CriticalPoint>().First();
        Stability.CriticalLoadSensitivity Compute()
        {
            var sys = new Continuation.EquilibriumSystem(model, new Continuation.SolverControls().SingularPivotRatio);
            var u = cp.State!.Displacements;
            sys.Refactor(u);
            var modes = new[] { cp.Mode }.Concat(cp.AdditionalModes).Select(full => { var f = new double[sys.FreeCount]; model.Dofs.Gather(full, f); return f; }).ToList();
            return Stability.SensitivityAnalysis.Compute(sys, u, cp.LoadFactor, modes, cp.Kind, factorAtU: true);
        }
        var shared = Compute();
        Stability.CriticalLoadSensitivity alone;
        using (SpendBudget()) alone = Compute();
        Assert.True(shared.Defined, shared.Note);
        Assert.Equal(shared.BarArea, alone.BarArea);
        Assert.Equal(shared.NodeCoordinates, alone.NodeCoordinates);
        Assert.Equal(shared.GroundSpringStiffness, alone.GroundSpringStiffness);
        Assert.Equal(shared.Breaks.NodeAxes, alone.Breaks.NodeAxes);
    }

    /// <summary>
    /// Critical-point location (Lanczos on K⁻¹, rates from tangents along the path, Newton trials) gives the same bits
    /// with helpers and with the budget spent: the double-layer roof m = 10, every critical λ, mode and trial count.
    /// </summary>
    [Fact]
    public void Critical_point_location_is_bit_identical_with_and_without_helper_threads()
    {
        var def = PathService.Bench.Models.SpaceTrussRoof.Create(10);
        List<Continuation.PathEvent> Run() => new Continuation.PathTracer(StructuralModel.Create(def), new Continuation.SolverControls
        {
            InitialLoadIncrement = 0.5, MaxPoints = 60,
        }).Trace().ToList();
        var shared = Run();
        List<Continuation.PathEvent> alone;
        using (SpendBudget()) alone = Run();
        var a = shared.OfType<Continuation.CriticalPoint>().ToList();
        var b = alone.OfType<Continuation.CriticalPoint>().ToList();
        Assert.NotEmpty(a);
        Assert.Equal(a.Select(c => c.LoadFactor), b.Select(c => c.LoadFactor));
        Assert.Equal(a.SelectMany(c => c.Mode), b.SelectMany(c => c.Mode));
        var sa = (Continuation.PathSummary)shared[^1];
        var sb = (Continuation.PathSummary)alone[^1];
        Assert.Equal(sa.CriticalPointTrials, sb.CriticalPointTrials);
        Assert.Equal(sa.CriticalPointSolves, sb.CriticalPointSolves);
    }
}
