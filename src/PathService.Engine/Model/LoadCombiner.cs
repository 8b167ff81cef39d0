namespace PathService.Engine.Model;

/// <summary>
/// Resolves load sets, self-weight and the factored combination into the two nodal load vectors the engine uses:
/// F_const and F_ref (full vectors in the layout of the DofMap; moments go to the rotations of rotating nodes). Self-weight of a bar, ρ·A0·L0·g, goes half to each end node.
/// </summary>
internal static class LoadCombiner
{
    public static (double[] Constant, double[] Reference) Resolve(ModelDefinition def, Func<string, int> nodeIndex, double[] barLength, DofMap dofs)
    {
        Func<string, int> offset = id => dofs.Offset[nodeIndex(id)];
        var constant = new double[dofs.FullCount];
        var reference = new double[dofs.FullCount];
        Add(constant, def.Loads.Constant, 1.0, offset);
        Add(reference, def.Loads.Reference, 1.0, offset);
        if (def.Combination is { } combo)
        {
            var loadSets = def.LoadSets.ToDictionary(p => p.Name, StringComparer.Ordinal);
            foreach (var pf in combo.Constant) AddLoadSet(constant, def, loadSets[pf.LoadSet], pf.Factor, offset, barLength);
            foreach (var pf in combo.Reference) AddLoadSet(reference, def, loadSets[pf.LoadSet], pf.Factor, offset, barLength);
        }
        return (constant, reference);
    }

    /// <param name="offset">First full DOF of a node id.</param>
    private static void AddLoadSet(double[] f, ModelDefinition def, LoadSet p, double factor, Func<string, int> offset, double[] barLength)
    {
        Add(f, p.Loads, factor, offset);
        if (!p.SelfWeight) return;
        var (gx, gy, gz) = def.Gravity;
        for (int b = 0; b < def.Bars.Count; b++)
        {
            var bar = def.Bars[b];
            double half = 0.5 * factor * bar.Density * bar.Area * barLength[b];
            foreach (int o in new[] { offset(bar.StartNode), offset(bar.EndNode) })
            {
                f[o] += half * gx;
                f[o + 1] += half * gy;
                f[o + 2] += half * gz;
            }
        }
    }

    private static void Add(double[] f, IReadOnlyList<NodalLoad> loads, double factor, Func<string, int> offset)
    {
        foreach (var l in loads)
        {
            int o = offset(l.Node);
            f[o] += factor * l.Fx;
            f[o + 1] += factor * l.Fy;
            f[o + 2] += factor * l.Fz;
            // Moments only where the node rotates (validation rejects them elsewhere).
            if (!l.HasMoment) continue;
            f[o + 3] += factor * l.Mx;
            f[o + 4] += factor * l.My;
            f[o + 5] += factor * l.Mz;
        }
    }
}
