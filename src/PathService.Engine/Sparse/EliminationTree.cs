// EliminationTree: elimination tree and column counts of L for C = L D L^T.
//
// Method: the up-looking symbolic factorisation of T. A. Davis, "Algorithm 849:
// A concise sparse Cholesky factorization package", ACM TOMS 31(4), 2005 (also
// Davis, "Direct Methods for Sparse Linear Systems", SIAM, 2006). Row k of L is
// the set of nodes reached from the entries i < k of column k of C by walking up
// the elimination tree until a node already marked for row k; each reached node
// i gets one more entry in column i of L, and a node without parent gets k.
//
// Takes: the upper pattern Cp, Ci of the permuted matrix. Returns: Parent
// (-1 for roots) and ColumnCounts (strictly-lower nonzeros per column of L).
// Limits: O(nnz(L)) time, O(n) workspace; exact counts (no cancellation assumed).

namespace PathService.Engine.Sparse;

internal static class EliminationTree
{
    public static void Compute(int n, int[] cp, int[] ci, out int[] parent, out int[] counts)
    {
        parent = new int[n];
        counts = new int[n];
        var flag = new int[n];

        // For each row k of L: walk from every i < k in column k of C up the tree.
        for (int k = 0; k < n; k++)
        {
            parent[k] = -1;
            flag[k] = k;
            // Each entry C(i,k), i < k, contributes the path i -> ... -> (first node marked k).
            for (int q = cp[k]; q < cp[k + 1]; q++)
            {
                // L(k,i) != 0 for every i on the path; the topmost unparented node hangs under k.
                for (int i = ci[q]; flag[i] != k; i = parent[i])
                {
                    if (parent[i] == -1) parent[i] = k;
                    counts[i]++;
                    flag[i] = k;
                }
            }
        }
    }
}
