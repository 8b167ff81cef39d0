// WeightedGraph: an undirected graph in compressed sparse rows with vertex and edge weights, the object the
// multilevel partitioner works on (the supervariable graph, its coarsenings and the parts of a dissection).
//
// Data structure: neighbours of v are Adj[Ptr[v] .. Ptr[v+1]), each edge stored in both directions, no self
// loops; EdgeWeights aligned with Adj; VertexWeights = unknowns a vertex stands for.

namespace PathService.Engine.Sparse;

internal sealed class WeightedGraph
{
    public WeightedGraph(int[] ptr, int[] adj, int[]? edgeWeights, int[] vertexWeights)
    {
        Ptr = ptr;
        Adj = adj;
        if (edgeWeights is null)
        {
            edgeWeights = new int[adj.Length];
            Array.Fill(edgeWeights, 1);
        }
        EdgeWeights = edgeWeights;
        VertexWeights = vertexWeights;
        long total = 0;
        foreach (int w in vertexWeights) total += w;
        TotalWeight = total;
    }

    public int[] Ptr { get; }
    public int[] Adj { get; }
    public int[] EdgeWeights { get; }
    public int[] VertexWeights { get; }
    public long TotalWeight { get; }
    public int Count => VertexWeights.Length;

    /// <summary>
    /// The subgraph induced by the given vertices (in that order: vertex k of the result is vertices[k]).
    /// <paramref name="local"/> is a workspace of Count entries filled with -1, returned so.
    /// </summary>
    public WeightedGraph Induced(int[] vertices, int[] local)
    {
        for (int k = 0; k < vertices.Length; k++) local[vertices[k]] = k;
        var ptr = new int[vertices.Length + 1];
        int edges = 0;
        for (int k = 0; k < vertices.Length; k++)
        {
            int v = vertices[k];
            for (int q = Ptr[v]; q < Ptr[v + 1]; q++) if (local[Adj[q]] >= 0) edges++;
            ptr[k + 1] = edges;
        }
        var adj = new int[edges];
        var ew = new int[edges];
        var vw = new int[vertices.Length];
        int w = 0;
        for (int k = 0; k < vertices.Length; k++)
        {
            int v = vertices[k];
            vw[k] = VertexWeights[v];
            for (int q = Ptr[v]; q < Ptr[v + 1]; q++)
            {
                int t = local[Adj[q]];
                if (t < 0) continue;
                adj[w] = t;
                ew[w++] = EdgeWeights[q];
            }
        }
        foreach (int v in vertices) local[v] = -1;
        return new WeightedGraph(ptr, adj, ew, vw);
    }

    /// <summary>Connected components: comp[v] = component number, numbered by their smallest vertex.</summary>
    public int Components(out int[] comp)
    {
        int n = Count;
        comp = new int[n];
        Array.Fill(comp, -1);
        var queue = new int[n];
        int count = 0;
        for (int s = 0; s < n; s++)
        {
            if (comp[s] >= 0) continue;
            int head = 0, tail = 0;
            queue[tail++] = s;
            comp[s] = count;
            while (head < tail)
            {
                int v = queue[head++];
                for (int q = Ptr[v]; q < Ptr[v + 1]; q++)
                {
                    int u = Adj[q];
                    if (comp[u] < 0) { comp[u] = count; queue[tail++] = u; }
                }
            }
            count++;
        }
        return count;
    }
}
