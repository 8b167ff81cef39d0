// SupervariableGraph: the adjacency graph of a symmetric pattern with indistinguishable unknowns merged.
//
// Method: two unknowns are indistinguishable when their closed adjacency sets (the unknown itself and its
// neighbours) are equal; eliminating one makes the other's column identical, so an ordering may treat the set as
// one vertex of weight |set| (George and Liu, "Computer Solution of Large Sparse Positive Definite Systems",
// Prentice-Hall, 1981; the "compressed graph" of Ashcraft, "Compressed graphs and the minimum degree algorithm",
// SIAM J. Sci. Comput. 16(6), 1995). Sets are found by hashing each closed set (sum of its indices and its size),
// sorting the unknowns by (hash, index) and comparing lists within a hash bucket, so the grouping depends on the
// pattern only. For a bar structure this finds the node's unknowns (3 for a truss node, 6 for a beam node) without
// being told which unknowns belong to which node.
//
// Data structure: compressed sparse rows over the supervariables (Ptr, Adj: both directions, no self loops),
// vertex weight = number of unknowns, edge weight 1; Members lists the unknowns of each supervariable in
// ascending order (MemberPtr into Members). Supervariables are numbered by their smallest unknown.

namespace PathService.Engine.Sparse;

internal sealed class SupervariableGraph
{
    public required WeightedGraph Graph { get; init; }

    /// <summary>Unknowns of supervariable s: Members[MemberPtr[s] .. MemberPtr[s+1]).</summary>
    public required int[] MemberPtr { get; init; }

    public required int[] Members { get; init; }

    /// <summary>Full (both triangles) adjacency of the unknowns, diagonal excluded, rows ascending.</summary>
    public required int[] FullPtr { get; init; }

    public required int[] FullAdj { get; init; }

    public static SupervariableGraph Build(SymmetricPattern pattern)
    {
        int n = pattern.Size;
        var (ptr, adj) = FullAdjacency(pattern);

        // Hash of the closed set {i} ∪ adj(i): sum and count are invariant under equal sets.
        var hash = new long[n];
        for (int i = 0; i < n; i++)
        {
            long h = i;
            for (int q = ptr[i]; q < ptr[i + 1]; q++) h += adj[q];
            hash[i] = h * 1_000_003L + (ptr[i + 1] - ptr[i]);
        }
        var byHash = new int[n];
        for (int i = 0; i < n; i++) byHash[i] = i;
        Array.Sort(byHash, (a, b) => hash[a] != hash[b] ? hash[a].CompareTo(hash[b]) : a.CompareTo(b));

        // Group: an unknown joins the first earlier unknown of its bucket with the same closed set.
        var rep = new int[n];
        Array.Fill(rep, -1);
        for (int s = 0; s < n;)
        {
            int e = s;
            while (e < n && hash[byHash[e]] == hash[byHash[s]]) e++;
            for (int x = s; x < e; x++)
            {
                int i = byHash[x];
                if (rep[i] >= 0) continue;
                rep[i] = i;
                for (int y = x + 1; y < e; y++)
                {
                    int j = byHash[y];
                    if (rep[j] < 0 && SameClosedSet(ptr, adj, i, j)) rep[j] = i;
                }
            }
            s = e;
        }

        // Number supervariables by their smallest unknown (rep is the smallest, since byHash ascends within a bucket).
        var id = new int[n];
        int count = 0;
        for (int i = 0; i < n; i++) id[i] = rep[i] == i ? count++ : -1;
        var sv = new int[n];
        for (int i = 0; i < n; i++) sv[i] = id[rep[i]];
        var memberPtr = new int[count + 1];
        for (int i = 0; i < n; i++) memberPtr[sv[i] + 1]++;
        for (int s = 0; s < count; s++) memberPtr[s + 1] += memberPtr[s];
        var members = new int[n];
        var next = (int[])memberPtr.Clone();
        for (int i = 0; i < n; i++) members[next[sv[i]]++] = i;

        // Quotient adjacency: neighbours of a supervariable are those of its first member, mapped and deduplicated.
        var gPtr = new int[count + 1];
        var mark = new int[count];
        Array.Fill(mark, -1);
        var gAdj = new List<int>(adj.Length / 3 + 1);
        for (int s = 0; s < count; s++)
        {
            int i = members[memberPtr[s]];
            mark[s] = s;
            for (int q = ptr[i]; q < ptr[i + 1]; q++)
            {
                int t = sv[adj[q]];
                if (mark[t] == s) continue;
                mark[t] = s;
                gAdj.Add(t);
            }
            gPtr[s + 1] = gAdj.Count;
        }
        var weights = new int[count];
        for (int s = 0; s < count; s++) weights[s] = memberPtr[s + 1] - memberPtr[s];
        var graph = new WeightedGraph(gPtr, gAdj.ToArray(), null, weights);
        return new SupervariableGraph { Graph = graph, MemberPtr = memberPtr, Members = members, FullPtr = ptr, FullAdj = adj };
    }

    private static bool SameClosedSet(int[] ptr, int[] adj, int i, int j)
    {
        // Closed sets equal  <=>  adj(i) \ {j} = adj(j) \ {i} and i, j adjacent.
        if (ptr[i + 1] - ptr[i] != ptr[j + 1] - ptr[j]) return false;
        int p = ptr[i], q = ptr[j], pe = ptr[i + 1], qe = ptr[j + 1];
        bool adjacent = false;
        while (p < pe || q < qe)
        {
            if (p < pe && adj[p] == j) { adjacent = true; p++; continue; }
            if (q < qe && adj[q] == i) { q++; continue; }
            if (p >= pe || q >= qe || adj[p] != adj[q]) return false;
            p++; q++;
        }
        return adjacent;
    }

    /// <summary>Both triangles of the pattern without the diagonal, each row ascending.</summary>
    internal static (int[] Ptr, int[] Adj) FullAdjacency(SymmetricPattern pattern)
    {
        int n = pattern.Size;
        var cp = pattern.ColumnPointers;
        var ri = pattern.RowIndices;
        var ptr = new int[n + 1];
        for (int j = 0; j < n; j++)
            for (int q = cp[j]; q < cp[j + 1]; q++)
            {
                int i = ri[q];
                if (i == j) continue;
                ptr[i + 1]++;
                ptr[j + 1]++;
            }
        for (int i = 0; i < n; i++) ptr[i + 1] += ptr[i];
        var adj = new int[ptr[n]];
        var next = (int[])ptr.Clone();
        // Column j's rows i < j go to row j; row i gets j. Visiting j ascending keeps every row ascending:
        // row i receives its lower neighbours (as column i's rows) before its upper ones.
        for (int j = 0; j < n; j++)
            for (int q = cp[j]; q < cp[j + 1]; q++)
            {
                int i = ri[q];
                if (i == j) continue;
                adj[next[j]++] = i;
            }
        for (int j = 0; j < n; j++)
            for (int q = cp[j]; q < cp[j + 1]; q++)
            {
                int i = ri[q];
                if (i == j) continue;
                adj[next[i]++] = j;
            }
        return (ptr, adj);
    }
}
