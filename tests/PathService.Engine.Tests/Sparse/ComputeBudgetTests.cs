// The process-wide compute-thread budget: a parallel kernel borrows helpers only from what the running analyses leave,
// runs alone when the budget is spent, and gives the same bits either way.

using PathService.Bench.Models;
using PathService.Engine.Assembly;
using PathService.Engine.Model;
using PathService.Engine.Sparse;

namespace PathService.Engine.Tests.Sparse;

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
}
