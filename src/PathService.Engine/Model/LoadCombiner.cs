namespace PathService.Engine.Model;

/// <summary>
/// Resolves load sets, self-weight and the factored combination into the two nodal load vectors the engine uses:
/// F_const and F_ref (full vectors, 3 per node). Self-weight of a bar, ρ·A0·L0·g, goes half to each end node.
/// </summary>
internal static class LoadCombiner
{
    public static (double[] Constant, double[] Reference) Resolve(ModelDefinition def, Func<string, int> nodeIndex, double[] barLength)
    {
        int n = def.Nodes.Count;
        var constant = new double[3 * n];
        var reference = new double[3 * n];
        Add(constant, def.Loads.Constant, 1.0, nodeIndex);
        Add(reference, def.Loads.Reference, 1.0, nodeIndex);
        if (def.Combination is { } combo)
        {
            var loadSets = def.LoadSets.ToDictionary(p => p.Name, StringComparer.Ordinal);
            foreach (var pf in combo.Constant) AddLoadSet(constant, def, loadSets[pf.LoadSet], pf.Factor, nodeIndex, barLength);
            foreach (var pf in combo.Reference) AddLoadSet(reference, def, loadSets[pf.LoadSet], pf.Factor, nodeIndex, barLength);
        }
        return (constant, reference);
    }

    private static void AddLoadSet(double[] f, ModelDefinition def, LoadSet p, double factor, Func<string, int> nodeIndex, double[] barLength)
    {
        Add(f, p.Loads, factor, nodeIndex);
        if (!p.SelfWeight) return;
        var (gx, gy, gz) = def.Gravity;
        for (int b = 0; b < def.Bars.Count; b++)
        {
            var bar = def.Bars[b];
            double half = 0.5 * factor * bar.Density * bar.Area * barLength[b];
            foreach (int node in new[] { nodeIndex(bar.StartNode), nodeIndex(bar.EndNode) })
            {
                f[3 * node] += half * gx;
                f[3 * node + 1] += half * gy;
                f[3 * node + 2] += half * gz;
            }
        }
    }

    private static void Add(double[] f, IReadOnlyList<NodalLoad> loads, double factor, Func<string, int> nodeIndex)
    {
        foreach (var l in loads)
        {
            int k = nodeIndex(l.Node);
            f[3 * k] += factor * l.Fx;
            f[3 * k + 1] += factor * l.Fy;
            f[3 * k + 2] += factor * l.Fz;
        }
    }
}
