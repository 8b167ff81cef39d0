// NodeSeparatorRefinement: improves a vertex separator by moving vertices out of it, Fiduccia-Mattheyses style.
//
// Method: C. M. Fiduccia and R. M. Mattheyses, "A linear-time heuristic for improving network partitions", DAC
// 1982, in the vertex-separator form of C. Ashcraft and J. W. H. Liu, "Applications of the Dulmage-Mendelsohn
// decomposition and network flow to graph bisection improvement", SIAM J. Matrix Anal. Appl. 19(2), 1998. A move
// takes a separator vertex v into part s and pulls v's neighbours in the other part into the separator, so the
// separator stays a separator; its gain is w(v) - sum of the weights pulled. Each pass makes the best move
// allowed by the balance bound (a part may not exceed Imbalance x half the weight) repeatedly, every vertex moved
// at most once, negative gains included (to climb out of local minima), and then undoes the moves after the best
// state seen (least excess over the bound, then smallest separator, then best balance). Passes repeat while one
// improves. Priority queues hold (gain, vertex) with stale entries skipped when popped; ties go to the smaller
// vertex, so the result depends on the graph and the starting separator only.

namespace PathService.Engine.Sparse;

internal static class NodeSeparatorRefinement
{
    private const int MaxPasses = 10;

    public static long[] Weights(WeightedGraph g, int[] where)
    {
        var w = new long[3];
        for (int v = 0; v < g.Count; v++) w[where[v]] += g.VertexWeights[v];
        return w;
    }

    /// <summary>How far the heavier part exceeds the balance bound (0 when balanced).</summary>
    public static long Excess(long[] w, double imbalance)
    {
        long bound = (long)Math.Ceiling(imbalance * (w[0] + w[1] + w[2]) / 2.0);
        return Math.Max(0, Math.Max(w[0], w[1]) - bound);
    }

    public static void Refine(WeightedGraph g, int[] where, double imbalance)
    {
        int n = g.Count;
        var vw = g.VertexWeights;
        var pw = Weights(g, where);
        long bound = (long)Math.Ceiling(imbalance * (pw[0] + pw[1] + pw[2]) / 2.0);
        var gain = new[] { new int[n], new int[n] };
        var moved = new bool[n];
        var queues = new[] { new PriorityQueue<int, long>(), new PriorityQueue<int, long>() };
        var log = new List<int>();       // moved vertex, its side, number pulled, then the pulled vertices
        int limit = Math.Clamp(n / 50, 30, 300);

        for (int pass = 0; pass < MaxPasses; pass++)
        {
            queues[0].Clear(); queues[1].Clear();
            Array.Clear(moved);
            for (int v = 0; v < n; v++) if (where[v] == 2) Push(v);
            log.Clear();
            long bestExcess = Excess(pw, imbalance), bestSep = pw[2], bestImb = Math.Abs(pw[0] - pw[1]);
            long startSep = bestSep, startExcess = bestExcess;
            int bestLog = 0, sinceBest = 0;
            while (true)
            {
                int v0 = Top(0), v1 = Top(1);
                bool ok0 = v0 >= 0 && pw[0] + vw[v0] <= bound, ok1 = v1 >= 0 && pw[1] + vw[v1] <= bound;
                int to;
                if (ok0 && ok1)
                {
                    to = gain[0][v0] > gain[1][v1] ? 0 : gain[1][v1] > gain[0][v0] ? 1 : pw[0] <= pw[1] ? 0 : 1;
                }
                else if (ok0) to = 0;
                else if (ok1) to = 1;
                else if (v0 >= 0 || v1 >= 0)
                {
                    // Out of balance: moving into the lighter part is the only way back.
                    to = pw[0] <= pw[1] ? 0 : 1;
                    if ((to == 0 ? v0 : v1) < 0) break;
                }
                else break;
                int v = to == 0 ? v0 : v1;
                queues[to].Dequeue();
                Move(v, to);

                long excess = Excess(pw, imbalance), imb = Math.Abs(pw[0] - pw[1]);
                if (excess < bestExcess || (excess == bestExcess && (pw[2] < bestSep || (pw[2] == bestSep && imb < bestImb))))
                {
                    bestExcess = excess; bestSep = pw[2]; bestImb = imb; bestLog = log.Count; sinceBest = 0;
                }
                else if (++sinceBest > limit) break;
            }
            Undo(bestLog);
            if (bestExcess == startExcess && bestSep >= startSep) break;
        }

        void Push(int v)
        {
            for (int s = 0; s < 2; s++)
            {
                int cost = 0;
                for (int q = g.Ptr[v]; q < g.Ptr[v + 1]; q++) if (where[g.Adj[q]] == 1 - s) cost += vw[g.Adj[q]];
                gain[s][v] = vw[v] - cost;
                // Key: larger gain first, then smaller vertex.
                queues[s].Enqueue(v, ((long)-gain[s][v] << 32) | (uint)v);
            }
        }

        // Best valid vertex of queue s (stale entries dropped), -1 when empty.
        int Top(int s)
        {
            while (queues[s].TryPeek(out int v, out long key))
            {
                if (where[v] == 2 && !moved[v] && (int)(key >> 32) == -gain[s][v]) return v;
                queues[s].Dequeue();
            }
            return -1;
        }

        void Move(int v, int to)
        {
            int other = 1 - to;
            moved[v] = true;
            where[v] = to; pw[to] += vw[v]; pw[2] -= vw[v];
            log.Add(v); log.Add(to);
            int countAt = log.Count;
            log.Add(0);
            for (int q = g.Ptr[v]; q < g.Ptr[v + 1]; q++)
            {
                int u = g.Adj[q];
                if (where[u] != other) continue;
                where[u] = 2; pw[other] -= vw[u]; pw[2] += vw[u];
                log.Add(u); log[countAt]++;
            }
            // Gains change for the pulled vertices, for separator neighbours of v and of the pulled vertices.
            for (int k = countAt + 1; k < log.Count; k++)
            {
                int u = log[k];
                if (!moved[u]) Push(u);
                for (int q = g.Ptr[u]; q < g.Ptr[u + 1]; q++)
                {
                    int x = g.Adj[q];
                    if (where[x] == 2 && !moved[x]) Push(x);
                }
            }
            for (int q = g.Ptr[v]; q < g.Ptr[v + 1]; q++)
            {
                int x = g.Adj[q];
                if (where[x] == 2 && !moved[x]) Push(x);
            }
        }

        // Undo the moves logged after position keep, last first.
        void Undo(int keep)
        {
            var starts = new List<int>();
            for (int p = 0; p < log.Count; p += 3 + log[p + 2]) starts.Add(p);
            for (int k = starts.Count - 1; k >= 0 && starts[k] >= keep; k--)
            {
                int p = starts[k], v = log[p], to = log[p + 1], pulled = log[p + 2], other = 1 - to;
                for (int i = 0; i < pulled; i++)
                {
                    int u = log[p + 3 + i];
                    where[u] = other; pw[2] -= vw[u]; pw[other] += vw[u];
                }
                where[v] = 2; pw[to] -= vw[v]; pw[2] += vw[v];
            }
        }
    }
}
