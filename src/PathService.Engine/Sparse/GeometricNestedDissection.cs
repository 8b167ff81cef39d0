// GeometricNestedDissection: a fill-reducing ordering for matrices whose
// unknowns sit at points in space (the DOFs of a structure's nodes).
//
// Method: nested dissection (George, "Nested dissection of a regular finite
// element mesh", SIAM J. Numer. Anal. 10(2), 1973; from memory) with separators found from
// the coordinates, as in recursive coordinate bisection: the nodes of a part
// are split at the median along the axis of largest extent, the nodes of one
// half that touch the other half (whichever set is smaller) form the
// separator, the two halves are ordered recursively and the separator comes
// last. All DOFs of a node stay together (they share one row structure), and
// parts of up to LeafNodes nodes are ordered by approximate minimum degree on
// their own graph (the hybrid used by graph-partitioning orderings). For the shallow roofs and domes of
// this trade, planar-ish meshes, a straight cut gives separators of about the
// side length, which is what makes nested dissection beat minimum degree on
// large grids (the top-level fronts grow like √n instead of faster).
//
// The ordering depends only on the pattern and the coordinates; ties in a
// coordinate are broken by the others and then by node index, so it is
// deterministic.

namespace PathService.Engine.Sparse;

public static class GeometricNestedDissection
{
    /// <summary>
    /// Parts of at most this many nodes are ordered by minimum degree on their own graph instead (the usual hybrid:
    /// minimum degree does better than dissection on small parts). 128 gave the fewest flops on the bench roofs.
    /// </summary>
    public const int LeafNodes = 128;

    /// <summary>
    /// Permutation (Permutation[k] = unknown eliminated k-th) of the pattern's unknowns.
    /// </summary>
    /// <param name="pattern">Upper compressed-column pattern of the matrix.</param>
    /// <param name="nodeOf">Node of each unknown (unknowns of one node stay together).</param>
    /// <param name="coordinates">x, y, z of each node (3 entries per node).</param>
    public static int[] Order(SymmetricPattern pattern, int[] nodeOf, double[] coordinates)
    {
        ArgumentNullException.ThrowIfNull(pattern);
        ArgumentNullException.ThrowIfNull(nodeOf);
        ArgumentNullException.ThrowIfNull(coordinates);
        int n = pattern.Size;
        if (nodeOf.Length != n) throw new ArgumentException($"nodeOf must have {n} entries, got {nodeOf.Length}.", nameof(nodeOf));
        int nodes = coordinates.Length / 3;
        foreach (int v in nodeOf)
            if ((uint)v >= (uint)nodes) throw new ArgumentException($"node index {v} outside the {nodes} nodes given.", nameof(nodeOf));

        // Unknowns of each node, and the node graph (two nodes adjacent when any of their unknowns couple).
        var dofPtr = new int[nodes + 1];
        foreach (int v in nodeOf) dofPtr[v + 1]++;
        for (int v = 0; v < nodes; v++) dofPtr[v + 1] += dofPtr[v];
        var dofs = new int[n];
        var fill = (int[])dofPtr.Clone();
        for (int i = 0; i < n; i++) dofs[fill[nodeOf[i]]++] = i;
        var (adjPtr, adj) = NodeGraph(pattern, nodeOf, nodes);

        var work = new int[nodes];
        int count = 0;
        for (int v = 0; v < nodes; v++) if (dofPtr[v + 1] > dofPtr[v]) work[count++] = v;
        var state = new State(coordinates, adjPtr, adj, nodes, pattern, dofPtr, dofs);
        var order = new List<int>(n);
        state.Dissect(work, 0, count, order);
        return order.ToArray();
    }

    private static (int[] Ptr, int[] Adj) NodeGraph(SymmetricPattern p, int[] nodeOf, int nodes)
    {
        var sets = new HashSet<int>[nodes];
        for (int j = 0; j < p.Size; j++)
            for (int q = p.ColumnPointers[j]; q < p.ColumnPointers[j + 1]; q++)
            {
                int a = nodeOf[p.RowIndices[q]], b = nodeOf[j];
                if (a == b) continue;
                (sets[a] ??= []).Add(b);
                (sets[b] ??= []).Add(a);
            }
        var ptr = new int[nodes + 1];
        for (int v = 0; v < nodes; v++) ptr[v + 1] = ptr[v] + (sets[v]?.Count ?? 0);
        var adj = new int[ptr[nodes]];
        for (int v = 0; v < nodes; v++)
        {
            if (sets[v] is null) continue;
            sets[v].CopyTo(adj, ptr[v]);
            Array.Sort(adj, ptr[v], sets[v].Count);
        }
        return (ptr, adj);
    }

    private sealed class State(double[] xyz, int[] adjPtr, int[] adj, int nodes, SymmetricPattern pattern, int[] dofPtr, int[] dofs)
    {
        private readonly int[] _local = Enumerable.Repeat(-1, pattern.Size).ToArray();
        private readonly int[] _mark = new int[nodes];
        private readonly double[] _key = new double[nodes];
        private int _stamp;

        /// <summary>Orders the nodes work[lo..hi) (which it may reorder) onto the end of order.</summary>
        public void Dissect(int[] work, int lo, int hi, List<int> order)
        {
            int len = hi - lo;
            if (len <= LeafNodes)
            {
                Leaf(work, lo, hi, order);
                return;
            }
            // Axis of largest extent; sort along it (ties: the next axes, then the node index).
            int axis = 0;
            double best = -1;
            for (int a = 0; a < 3; a++)
            {
                double min = double.PositiveInfinity, max = double.NegativeInfinity;
                for (int i = lo; i < hi; i++) { double c = xyz[3 * work[i] + a]; min = Math.Min(min, c); max = Math.Max(max, c); }
                if (max - min > best) { best = max - min; axis = a; }
            }
            Array.Sort(work, lo, len, Comparer<int>.Create((p, q) =>
            {
                for (int a = 0; a < 3; a++)
                {
                    int c = xyz[3 * p + (axis + a) % 3].CompareTo(xyz[3 * q + (axis + a) % 3]);
                    if (c != 0) return c;
                }
                return p.CompareTo(q);
            }));
            int mid = lo + len / 2;
            // Halves A = [lo, mid) and B = [mid, hi); the separator is the smaller of A's and B's boundaries.
            int stampA = ++_stamp, stampB = ++_stamp;
            for (int i = lo; i < mid; i++) _mark[work[i]] = stampA;
            for (int i = mid; i < hi; i++) _mark[work[i]] = stampB;
            int boundaryA = 0, boundaryB = 0;
            for (int i = lo; i < hi; i++)
            {
                int v = work[i], other = _mark[v] == stampA ? stampB : stampA;
                bool touches = false;
                for (int q = adjPtr[v]; q < adjPtr[v + 1] && !touches; q++) touches = _mark[adj[q]] == other;
                _key[v] = touches ? 1 : 0;
                if (touches) { if (_mark[v] == stampA) boundaryA++; else boundaryB++; }
            }
            int sepSide = boundaryA <= boundaryB ? stampA : stampB;
            // Partition in place: A's interior, B's interior, separator (each keeps its sorted order).
            var a0 = new List<int>(); var b0 = new List<int>(); var sep = new List<int>();
            for (int i = lo; i < hi; i++)
            {
                int v = work[i];
                if (_key[v] == 1 && _mark[v] == sepSide) sep.Add(v);
                else if (_mark[v] == stampA) a0.Add(v);
                else b0.Add(v);
            }
            if (a0.Count == 0 || b0.Count == 0)
            {
                // No useful split (everything touches): stop here.
                Leaf(work, lo, hi, order);
                return;
            }
            int w = lo;
            foreach (int v in a0) work[w++] = v;
            int aEnd = w;
            foreach (int v in b0) work[w++] = v;
            int bEnd = w;
            foreach (int v in sep) work[w++] = v;
            Dissect(work, lo, aEnd, order);
            Dissect(work, aEnd, bEnd, order);
            for (int i = bEnd; i < hi; i++) AddNode(work[i], order);
        }

        private void AddNode(int v, List<int> order)
        {
            for (int q = dofPtr[v]; q < dofPtr[v + 1]; q++) order.Add(dofs[q]);
        }

        /// <summary>A part too small to dissect: its unknowns by minimum degree on the part's own graph.</summary>
        private void Leaf(int[] work, int lo, int hi, List<int> order)
        {
            var list = new List<int>();
            for (int i = lo; i < hi; i++)
                for (int q = dofPtr[work[i]]; q < dofPtr[work[i] + 1]; q++) { _local[dofs[q]] = list.Count; list.Add(dofs[q]); }
            var entries = new List<(int, int)>();
            foreach (int j in list)
                for (int q = pattern.ColumnPointers[j]; q < pattern.ColumnPointers[j + 1]; q++)
                {
                    int i = pattern.RowIndices[q];
                    if (_local[i] >= 0) entries.Add((Math.Min(_local[i], _local[j]), Math.Max(_local[i], _local[j])));
                }
            var local = ApproximateMinimumDegree.Order(SymmetricPattern.FromEntries(list.Count, entries));
            foreach (int k in local) order.Add(list[k]);
            foreach (int d in list) _local[d] = -1;
        }
    }
}
