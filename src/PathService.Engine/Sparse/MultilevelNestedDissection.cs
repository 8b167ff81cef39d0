// MultilevelNestedDissection: a fill-reducing ordering from the graph of the matrix alone.
//
// Method: nested dissection (A. George, "Nested dissection of a regular finite element mesh", SIAM J. Numer. Anal.
// 10(2), 1973): find a small vertex separator, order the two parts first (recursively) and the separator last, so
// no fill joins the parts. The separators come from the multilevel scheme of Karypis and Kumar (SIAM J. Sci.
// Comput. 20(1), 1998; MultilevelSeparator) with Fiduccia-Mattheyses refinement of vertex separators
// (NodeSeparatorRefinement). It works on the supervariable graph (SupervariableGraph: unknowns with identical
// closed adjacency merged, weight = their number), so a structure's nodes are found from the pattern, whatever
// the number of unknowns per node. A disconnected part is split into its components (no separator needed); parts
// of at most LeafVertices supervariables are ordered by approximate minimum degree on their own unknowns (the
// usual hybrid: minimum degree beats dissection on small parts).
//
// Takes: a valid SymmetricPattern. Returns: Permutation[k] = unknown eliminated k-th. Deterministic: fixed seeds,
// no hashing of objects, no threads; the same pattern gives the same permutation.

namespace PathService.Engine.Sparse;

public static class MultilevelNestedDissection
{
    /// <summary>
    /// Parts of at most this many supervariables go to minimum degree. On the bench roofs (m = 60 and 120) 30 gave
    /// fewer flops than 60, 100 or 200 (scaling command, --orderings gnd).
    /// </summary>
    public const int LeafVertices = 30;

    /// <summary>Permutation (Permutation[k] = unknown eliminated k-th) of the pattern's unknowns.</summary>
    public static int[] Order(SymmetricPattern pattern)
    {
        ArgumentNullException.ThrowIfNull(pattern);
        int n = pattern.Size;
        if (n == 0) return [];
        var sg = SupervariableGraph.Build(pattern);
        var state = new State(sg, n);
        var ids = new int[sg.Graph.Count];
        for (int i = 0; i < ids.Length; i++) ids[i] = i;
        state.Dissect(sg.Graph, ids);
        return state.Order.ToArray();
    }

    private sealed class State(SupervariableGraph sg, int n)
    {
        private readonly int[] _local = Fill(n, -1);
        public List<int> Order { get; } = new(n);

        private static int[] Fill(int length, int value)
        {
            var a = new int[length];
            Array.Fill(a, value);
            return a;
        }

        /// <summary>Appends the order of g's vertices (ids[v] = supervariable of vertex v).</summary>
        public void Dissect(WeightedGraph g, int[] ids)
        {
            if (g.Count <= LeafVertices)
            {
                Leaf(ids);
                return;
            }
            int components = g.Components(out var comp);
            if (components > 1)
            {
                var lists = new List<int>[components];
                for (int c = 0; c < components; c++) lists[c] = [];
                for (int v = 0; v < g.Count; v++) lists[comp[v]].Add(v);
                var work = Fill(g.Count, -1);
                foreach (var list in lists) Part(g, list, ids, work);
                return;
            }
            var where = MultilevelSeparator.Find(g, 0x9E3779B97F4A7C15UL ^ (ulong)ids[0]);
            var a = new List<int>(); var b = new List<int>(); var s = new List<int>();
            for (int v = 0; v < g.Count; v++) (where[v] == 0 ? a : where[v] == 1 ? b : s).Add(v);
            if (a.Count == 0 || b.Count == 0)
            {
                Leaf(ids);
                return;
            }
            var local = Fill(g.Count, -1);
            Part(g, a, ids, local);
            Part(g, b, ids, local);
            foreach (int v in s) AddSupervariable(ids[v]);
        }

        private void Part(WeightedGraph g, List<int> vertices, int[] ids, int[] local)
        {
            var vs = vertices.ToArray();
            var sub = g.Induced(vs, local);
            var subIds = new int[vs.Length];
            for (int k = 0; k < vs.Length; k++) subIds[k] = ids[vs[k]];
            Dissect(sub, subIds);
        }

        private void AddSupervariable(int s)
        {
            for (int q = sg.MemberPtr[s]; q < sg.MemberPtr[s + 1]; q++) Order.Add(sg.Members[q]);
        }

        /// <summary>A small part: its unknowns by approximate minimum degree on the part's own graph.</summary>
        private void Leaf(int[] ids)
        {
            var list = new List<int>();
            foreach (int s in ids)
                for (int q = sg.MemberPtr[s]; q < sg.MemberPtr[s + 1]; q++) { _local[sg.Members[q]] = list.Count; list.Add(sg.Members[q]); }
            var entries = new List<(int, int)>();
            for (int k = 0; k < list.Count; k++)
            {
                int i = list[k];
                for (int q = sg.FullPtr[i]; q < sg.FullPtr[i + 1]; q++)
                {
                    int t = _local[sg.FullAdj[q]];
                    if (t > k) entries.Add((k, t));
                }
            }
            var local = ApproximateMinimumDegree.Order(SymmetricPattern.FromEntries(list.Count, entries));
            foreach (int k in local) Order.Add(list[k]);
            foreach (int d in list) _local[d] = -1;
        }
    }
}
