// MultilevelSeparator: a small vertex separator of a connected weighted graph, found by the multilevel scheme.
//
// Method: G. Karypis and V. Kumar, "A fast and high quality multilevel scheme for partitioning irregular graphs",
// SIAM J. Sci. Comput. 20(1), 1998, 359-392: (1) coarsen by heavy-edge matching (visit the vertices in a
// pseudo-random order, match each unmatched vertex with the unmatched neighbour joined by the heaviest edge,
// collapse the pairs, adding vertex weights and the weights of parallel edges) until the graph is small or stops
// shrinking; (2) on the coarsest graph, grow one side breadth-first from several seed vertices until it holds half
// the weight, take the other side's boundary as the separator, refine, keep the smallest balanced separator;
// (3) project the separator back level by level, refining it at each level. Refinement moves vertices out of the
// separator as in Fiduccia and Mattheyses, "A linear-time heuristic for improving network partitions", DAC 1982,
// in the vertex-separator form of Ashcraft and Liu, "Applications of the Dulmage-Mendelsohn decomposition and
// network flow to graph bisection improvement", SIAM J. Matrix Anal. Appl. 19(2), 1998 (NodeSeparatorRefinement).
//
// Takes: a connected WeightedGraph with at least two vertices. Returns: where[v] = 0 or 1 (the two parts) or 2
// (separator): no edge joins part 0 to part 1. Deterministic: the only randomness is a fixed-seed generator.

namespace PathService.Engine.Sparse;

internal static class MultilevelSeparator
{
    /// <summary>Coarsening stops at this many vertices (the initial separator is cheap to search below it).</summary>
    private const int CoarsestVertices = 120;

    /// <summary>
    /// Seeds tried for the initial separator on the coarsest graph: 8 for a coarsened graph, 4 for a graph small
    /// enough not to need coarsening (the many small parts near the leaves; 4 instead of 8 there cost +0.3 % flops
    /// at m = 120 and saved about a quarter of the ordering time).
    /// </summary>
    private const int InitialTries = 8, InitialTriesSmall = 4;

    /// <summary>
    /// Largest part weight allowed, as a multiple of half the total weight (1.4: parts within 70/30). A looser bound
    /// lets the separator follow a short path; on the bench roofs 1.4 gave the fewest flops of 1.1-2.0 (m = 60, 120).
    /// </summary>
    internal const double Imbalance = 1.4;

    public static int[] Find(WeightedGraph graph, ulong seed)
    {
        var rng = new SplitMix(seed);
        // (1) Coarsen; a coarse vertex may not exceed a fraction of the total, so no vertex dominates a part.
        var levels = new List<(WeightedGraph Graph, int[] CoarseOf)>();
        var g = graph;
        long maxVertexWeight = Math.Max(1, (long)(1.5 * graph.TotalWeight / CoarsestVertices));
        while (g.Count > CoarsestVertices)
        {
            var (coarse, map) = Coarsen(g, rng, maxVertexWeight);
            if (coarse.Count > 0.95 * g.Count) break;
            levels.Add((g, map));
            g = coarse;
        }
        // (2) Initial separator on the coarsest graph.
        var where = Initial(g, rng, levels.Count == 0 ? InitialTriesSmall : InitialTries);
        // (3) Project and refine.
        for (int l = levels.Count - 1; l >= 0; l--)
        {
            var (fine, map) = levels[l];
            var fw = new int[fine.Count];
            for (int v = 0; v < fine.Count; v++) fw[v] = where[map[v]];
            where = fw;
            NodeSeparatorRefinement.Refine(fine, where, Imbalance);
        }
        return where;
    }

    /// <summary>Heavy-edge matching and the collapsed graph; CoarseOf[v] = coarse vertex of v.</summary>
    private static (WeightedGraph Coarse, int[] CoarseOf) Coarsen(WeightedGraph g, SplitMix rng, long maxVertexWeight)
    {
        int n = g.Count;
        var visit = new int[n];
        for (int i = 0; i < n; i++) visit[i] = i;
        rng.Shuffle(visit);
        var match = new int[n];
        Array.Fill(match, -1);
        var vw = g.VertexWeights;
        foreach (int v in visit)
        {
            if (match[v] >= 0) continue;
            int best = -1, bestWeight = 0;
            for (int q = g.Ptr[v]; q < g.Ptr[v + 1]; q++)
            {
                int u = g.Adj[q];
                if (match[u] >= 0 || vw[u] + vw[v] > maxVertexWeight) continue;
                if (g.EdgeWeights[q] > bestWeight) { best = u; bestWeight = g.EdgeWeights[q]; }
            }
            if (best >= 0) { match[v] = best; match[best] = v; }
            else match[v] = v;
        }
        // Coarse numbering in vertex order (the smaller of each pair names the coarse vertex's position).
        var map = new int[n];
        int cn = 0;
        for (int v = 0; v < n; v++) if (v <= match[v]) { map[v] = cn; map[match[v]] = cn; cn++; }
        var cPtr = new int[cn + 1];
        var cAdj = new List<int>(g.Adj.Length / 2);
        var cEw = new List<int>(g.Adj.Length / 2);
        var cVw = new int[cn];
        var slot = new int[cn];
        Array.Fill(slot, -1);
        int c = 0;
        for (int v = 0; v < n; v++)
        {
            if (v > match[v]) continue;
            int start = cAdj.Count;
            for (int k = 0; k < (v == match[v] ? 1 : 2); k++)
            {
                int x = k == 0 ? v : match[v];
                cVw[c] += vw[x];
                for (int q = g.Ptr[x]; q < g.Ptr[x + 1]; q++)
                {
                    int t = map[g.Adj[q]];
                    if (t == c) continue;
                    if (slot[t] >= start) { cEw[slot[t]] += g.EdgeWeights[q]; continue; }
                    slot[t] = cAdj.Count;
                    cAdj.Add(t);
                    cEw.Add(g.EdgeWeights[q]);
                }
            }
            cPtr[++c] = cAdj.Count;
        }
        return (new WeightedGraph(cPtr, cAdj.ToArray(), cEw.ToArray(), cVw), map);
    }

    /// <summary>Greedy growing from several seeds, each refined; the smallest balanced separator is kept.</summary>
    private static int[] Initial(WeightedGraph g, SplitMix rng, int tries)
    {
        int n = g.Count;
        int[]? best = null;
        long bestSep = long.MaxValue, bestExcess = long.MaxValue;
        var queue = new int[n];
        for (int t = 0; t < tries; t++)
        {
            var where = new int[n];
            Array.Fill(where, 1);
            long grown = 0;
            int head = 0, tail = 0;
            // Grow part 0 breadth-first until it holds half the weight (a new seed if a search runs dry).
            int seed = rng.Next(n);
            while (grown < g.TotalWeight / 2)
            {
                if (head == tail)
                {
                    while (where[seed] != 1) seed = (seed + 1) % n;
                    where[seed] = 0; grown += g.VertexWeights[seed]; queue[tail++] = seed;
                    continue;
                }
                int v = queue[head++];
                for (int q = g.Ptr[v]; q < g.Ptr[v + 1] && grown < g.TotalWeight / 2; q++)
                {
                    int u = g.Adj[q];
                    if (where[u] != 1) continue;
                    where[u] = 0; grown += g.VertexWeights[u]; queue[tail++] = u;
                }
            }
            // Part 1's boundary becomes the separator.
            for (int v = 0; v < n; v++)
            {
                if (where[v] != 1) continue;
                for (int q = g.Ptr[v]; q < g.Ptr[v + 1]; q++)
                    if (where[g.Adj[q]] == 0) { where[v] = 2; break; }
            }
            NodeSeparatorRefinement.Refine(g, where, Imbalance);
            var w = NodeSeparatorRefinement.Weights(g, where);
            long excess = NodeSeparatorRefinement.Excess(w, Imbalance);
            if (excess < bestExcess || (excess == bestExcess && w[2] < bestSep))
            {
                best = where; bestSep = w[2]; bestExcess = excess;
            }
        }
        return best!;
    }

    /// <summary>SplitMix64 (Steele, Lea and Flood, "Fast splittable pseudorandom number generators", OOPSLA 2014).</summary>
    internal sealed class SplitMix(ulong state)
    {
        private ulong _state = state;

        public ulong NextULong()
        {
            ulong z = _state += 0x9E3779B97F4A7C15UL;
            z = (z ^ (z >> 30)) * 0xBF58476D1CE4E5B9UL;
            z = (z ^ (z >> 27)) * 0x94D049BB133111EBUL;
            return z ^ (z >> 31);
        }

        public int Next(int bound) => (int)(NextULong() % (ulong)bound);

        public void Shuffle(int[] a)
        {
            for (int i = a.Length - 1; i > 0; i--)
            {
                int j = Next(i + 1);
                (a[i], a[j]) = (a[j], a[i]);
            }
        }
    }
}
