using PathService.Engine.Assembly;
using PathService.Engine.Model;
using PathService.Engine.Sparse;

namespace PathService.Application.Validation;

/// <summary>
/// Estimate of the memory one analysis needs, computed from the model before anything is factorised. The part that
/// grows fastest is the factor of the tangent stiffness. A cheap upper bound (a dense triangle) settles every model that
/// is small enough; only when that bound exceeds the budget is the engine's symbolic analysis run on the real pattern
/// (ordering + column counts, a small fraction of one factorisation) to get the exact number of factor entries.
/// </summary>
public static class AnalysisMemory
{
    /// <summary>Bytes per factor entry: the value, plus the same again for supernodal padding and work panels.</summary>
    private const long BytesPerFactorEntry = 16;

    /// <summary>Result of an estimate; <see cref="Exact"/> tells whether the symbolic analysis was run.</summary>
    public readonly record struct Estimate(long Bytes, long FactorEntries, bool Exact);

    /// <param name="model">The model to analyse.</param>
    /// <param name="budgetBytes">The budget: the symbolic analysis runs only when the cheap bound exceeds it (0 or less = never).</param>
    /// <param name="extraVectors">Dense work vectors of length "free DOFs" the analysis keeps besides the usual ones (e.g. a buckling subspace).</param>
    /// <param name="ct">Checked before and after the symbolic analysis (which only runs when the cheap bound exceeds the budget).</param>
    public static Estimate Of(StructuralModel model, long budgetBytes, int extraVectors = 0, CancellationToken ct = default)
    {
        long n = model.Dofs.FreeCount;
        long baseBytes = FixedBytes(model, n, extraVectors);
        long denseEntries = n * (n + 1) / 2;
        long upper = baseBytes + BytesPerFactorEntry * denseEntries;
        if (budgetBytes <= 0 || upper <= budgetBytes) return new(upper, denseEntries, false);
        if (n == 0) return new(baseBytes, 0, true);
        ct.ThrowIfCancellationRequested();
        var pattern = new StructureAssembler(model).Pattern;
        var symbolic = LdlSymbolic.Analyze(pattern);
        ct.ThrowIfCancellationRequested();
        long entries = symbolic.FactorNonZeroCount;
        // From this size the engine may pick nested dissection (fewer flops), whose factor can hold a few per cent more
        // entries than minimum degree's (up to 8 % on the bench roofs); estimate with that margin rather than order twice.
        if (n >= OrderingChoice.AutomaticThreshold) entries += entries / 8;
        return new(baseBytes + BytesPerFactorEntry * entries, entries, true);
    }

    /// <summary>The cheap upper bound (a dense factor triangle), in bytes: no ordering, no symbolic analysis.</summary>
    public static long Upper(StructuralModel model, int extraVectors = 0)
    {
        long n = model.Dofs.FreeCount;
        return FixedBytes(model, n, extraVectors) + BytesPerFactorEntry * (n * (n + 1) / 2);
    }

    private static long FixedBytes(StructuralModel model, long n, int extraVectors)
    {
        long nodes = model.NodeCount, bars = model.BarCount + model.LinkSpringIds.Length + model.GroundSpringIds.Length;
        long beams = model.Beams.Count;
        // Upper pattern of K: a 6×6 upper block per node at most (3×3 without rotations), a full 3×3 block per bar and a
        // full 6×6 block per beam element; values, pattern and a few copies.
        long kEntries = (model.HasBeams ? 21 : 6) * nodes + 9 * bars + 36 * beams;
        return 512 * nodes + 512 * bars     // model arrays, ids, per-bar kinematics and scatter maps
             + 2048 * beams                  // per beam element: reference data, stored 12×12 tangent and force, scatter map
             + 40 * kEntries                 // pattern (int), values and the copies an analysis keeps (double)
             + 8 * n * (48 + extraVectors)   // work vectors of the iteration, monitored states
             + (8L << 20);                   // fixed overhead of a call
    }
}
