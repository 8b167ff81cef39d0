// LdlSymbolic: symbolic phase of the sparse LDL^T factorisation, once per pattern.
//
// Method: fill-reducing ordering (natural, approximate minimum degree,
// Amestoy, Davis and Duff, 1996, or multilevel nested dissection), then the permuted upper pattern with its slot
// map, then elimination tree and column counts by the up-looking algorithm of
// Davis (ACM TOMS 31(4), 2005).
//
// Takes: a SymmetricPattern (already validated by its constructor).
// Returns: permutation, inverse, elimination tree, column counts of L, factor
// size and a flop estimate: FactorFlopCount = sum_k (c_k^2 + c_k), c_k the
// strictly-lower count of column k (a multiply-add counted as 2 flops, the
// divisions and pivot updates as c_k). OrderingTime covers the ordering only,
// SymbolicTime the permuted pattern plus tree and counts.
// Limits: purely structural; the numeric phase does no pivoting, so this
// structure is final for every matrix on the pattern.

using System.Diagnostics;

namespace PathService.Engine.Sparse;

/// <summary>Symbolic phase, computed once per pattern: fill-reducing ordering, elimination tree, column counts of L.</summary>
public sealed class LdlSymbolic
{
    private LdlSymbolic(SymmetricPattern pattern, OrderingMethod ordering, int[] permutation, TimeSpan orderingTime)
    {
        Pattern = pattern;
        Ordering = ordering;
        int n = pattern.Size;
        Permutation = permutation;
        OrderingTime = orderingTime;

        var clock = Stopwatch.StartNew();
        // Inverse permutation: InversePermutation[Permutation[k]] = k.
        InversePermutation = new int[n];
        for (int k = 0; k < n; k++) InversePermutation[Permutation[k]] = k;
        Upper = new PermutedUpperPattern(pattern, InversePermutation);
        EliminationTree.Compute(n, Upper.Cp, Upper.Ci, out var parent, out var counts);
        Parent = parent;
        ColumnCounts = counts;

        // |L| = sum_k c_k and flops = sum_k (c_k^2 + c_k).
        long nnz = 0;
        double flops = 0;
        for (int k = 0; k < n; k++)
        {
            nnz += counts[k];
            flops += (double)counts[k] * counts[k] + counts[k];
        }
        FactorNonZeroCount = nnz;
        FactorFlopCount = flops;
        SymbolicTime = clock.Elapsed;
    }

    /// <summary>Orders the pattern and computes the elimination tree and column counts of L.</summary>
    public static LdlSymbolic Analyze(SymmetricPattern pattern, OrderingMethod ordering = OrderingMethod.ApproximateMinimumDegree)
    {
        ArgumentNullException.ThrowIfNull(pattern);
        var clock = Stopwatch.StartNew();
        var perm = ordering switch
        {
            OrderingMethod.ApproximateMinimumDegree => ApproximateMinimumDegree.Order(pattern),
            OrderingMethod.GraphNestedDissection => MultilevelNestedDissection.Order(pattern),
            OrderingMethod.Natural => Enumerable.Range(0, pattern.Size).ToArray(),
            _ => throw new ArgumentException($"Ordering {ordering} needs more than the pattern: use {nameof(FromPermutation)}.", nameof(ordering)),
        };
        return new LdlSymbolic(pattern, ordering, perm, clock.Elapsed);
    }

    /// <summary>Symbolic analysis with a permutation computed elsewhere (Permutation[k] = unknown eliminated k-th).</summary>
    public static LdlSymbolic FromPermutation(SymmetricPattern pattern, int[] permutation, OrderingMethod ordering, TimeSpan orderingTime)
    {
        ArgumentNullException.ThrowIfNull(pattern);
        ArgumentNullException.ThrowIfNull(permutation);
        if (permutation.Length != pattern.Size)
            throw new ArgumentException($"The permutation must have {pattern.Size} entries, got {permutation.Length}.", nameof(permutation));
        var seen = new bool[pattern.Size];
        foreach (int i in permutation)
        {
            if ((uint)i >= (uint)pattern.Size || seen[i])
                throw new ArgumentException($"Not a permutation of 0..{pattern.Size - 1}: {i} is out of range or repeated.", nameof(permutation));
            seen[i] = true;
        }
        return new LdlSymbolic(pattern, ordering, (int[])permutation.Clone(), orderingTime);
    }

    public SymmetricPattern Pattern { get; }
    public OrderingMethod Ordering { get; }

    /// <summary>Permutation[k] = original index eliminated k-th.</summary>
    public int[] Permutation { get; }

    /// <summary>InversePermutation[original] = elimination position.</summary>
    public int[] InversePermutation { get; }

    /// <summary>Elimination tree of the permuted matrix, -1 for roots.</summary>
    public int[] Parent { get; }

    /// <summary>Strictly-lower nonzeros of each column of L (permuted).</summary>
    public int[] ColumnCounts { get; }

    /// <summary>Sum of ColumnCounts (unit diagonal excluded).</summary>
    public long FactorNonZeroCount { get; }

    /// <summary>Sum over columns of c_k^2 + c_k.</summary>
    public double FactorFlopCount { get; }

    public TimeSpan OrderingTime { get; }
    public TimeSpan SymbolicTime { get; }

    /// <summary>Upper pattern of P A P^T with the map to the caller's value slots.</summary>
    internal PermutedUpperPattern Upper { get; }
}
