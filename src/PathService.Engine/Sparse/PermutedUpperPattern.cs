// PermutedUpperPattern: the upper pattern of C = P A P^T, built once at analysis.
//
// Data structure: compressed columns Cp, Ci of the upper triangle of C, rows
// ascending (diagonal last), plus Cs: for each entry of C the slot of the same
// entry in the caller's values array (aligned with SymmetricPattern.RowIndices).
// The numeric phase reads values[Cs[q]] directly: no search, no copy of A.
//
// Takes: a valid pattern and the inverse permutation inv (inv[original] = new).
// Limits: O(nnz log) for the per-column sorts; done once per pattern.

namespace PathService.Engine.Sparse;

internal sealed class PermutedUpperPattern
{
    public readonly int[] Cp;
    public readonly int[] Ci;
    public readonly int[] Cs;

    public PermutedUpperPattern(SymmetricPattern pattern, int[] inv)
    {
        int n = pattern.Size, nnz = pattern.NonZeroCount;
        int[] ap = pattern.ColumnPointers, ai = pattern.RowIndices;
        Cp = new int[n + 1];
        Ci = new int[nnz];
        Cs = new int[nnz];

        // Count entries per column of C: entry A(i,j) goes to column max(inv i, inv j).
        for (int j = 0; j < n; j++)
            for (int s = ap[j]; s < ap[j + 1]; s++)
                Cp[Math.Max(inv[ai[s]], inv[j]) + 1]++;

        // Column pointers of C as prefix sums.
        for (int k = 0; k < n; k++) Cp[k + 1] += Cp[k];

        // Place each entry with its row min(inv i, inv j) and its source slot s.
        var fill = new int[n];
        Array.Copy(Cp, fill, n);
        for (int j = 0; j < n; j++)
            for (int s = ap[j]; s < ap[j + 1]; s++)
            {
                int a = inv[ai[s]], b = inv[j];
                int q = fill[Math.Max(a, b)]++;
                Ci[q] = Math.Min(a, b);
                Cs[q] = s;
            }

        // Sort rows within each column of C (the diagonal becomes the last entry).
        for (int k = 0; k < n; k++)
            Array.Sort(Ci, Cs, Cp[k], Cp[k + 1] - Cp[k]);
    }

    /// <summary>Source slot of the diagonal entry C(k,k) = A(perm k, perm k).</summary>
    public int DiagonalSlot(int k) => Cs[Cp[k + 1] - 1];
}
