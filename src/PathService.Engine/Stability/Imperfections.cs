using PathService.Engine.Model;

namespace PathService.Engine.Stability;

/// <summary>
/// Geometric imperfections: node positions moved by a scaled shape, a weighted sum of buckling modes or a deformed
/// shape from an earlier run (full vectors, 3 entries per node). The combined shape is normalised so that its largest
/// nodal offset is 1, then multiplied by the amplitude (a length). Amplitudes are often taken as span/300 to span/500
/// (common practice, no source); check the code that governs the project.
/// </summary>
public static class Imperfections
{
    /// <summary>Returns a copy of the definition whose nodes are moved by amplitude × normalised Σ wᵢ·shapeᵢ.</summary>
    public static ModelDefinition Apply(ModelDefinition definition, IReadOnlyList<double[]> shapes, IReadOnlyList<double> weights, double amplitude)
    {
        if (shapes.Count == 0) throw new ArgumentException("at least one imperfection shape is needed", nameof(shapes));
        if (weights.Count != shapes.Count) throw new ArgumentException($"{shapes.Count} shapes but {weights.Count} weights", nameof(weights));
        if (!double.IsFinite(amplitude)) throw new ArgumentException("the imperfection amplitude must be finite", nameof(amplitude));
        int n = definition.Nodes.Count;
        var combined = new double[3 * n];
        for (int s = 0; s < shapes.Count; s++)
        {
            if (shapes[s].Length != 3 * n) throw new ArgumentException($"shape {s} has {shapes[s].Length} entries; the model needs {3 * n} (3 per node)", nameof(shapes));
            for (int i = 0; i < combined.Length; i++) combined[i] += weights[s] * shapes[s][i];
        }
        double peak = 0;
        for (int k = 0; k < n; k++)
            peak = Math.Max(peak, Math.Sqrt(combined[3 * k] * combined[3 * k] + combined[3 * k + 1] * combined[3 * k + 1] + combined[3 * k + 2] * combined[3 * k + 2]));
        // Input-dependent (an explicit shape of zeros, or weights that cancel): an input fault, not a programming error.
        if (!(peak > 0) || !double.IsFinite(peak))
            throw new AnalysisInputException("ZERO_IMPERFECTION_SHAPE", "imperfection", "the imperfection shape is zero (or not finite) once weighted and summed, so it cannot be scaled to the amplitude");
        double scale = amplitude / peak;
        var nodes = definition.Nodes.Select((nd, k) => nd with
        {
            X = nd.X + scale * combined[3 * k],
            Y = nd.Y + scale * combined[3 * k + 1],
            Z = nd.Z + scale * combined[3 * k + 2],
        }).ToList();
        return definition with { Nodes = nodes, Name = $"{definition.Name} (imperfection {amplitude:G4})" };
    }

    /// <summary>
    /// The translations of the defined nodes (3 per node, definition order) from a full vector in the layout of the
    /// model's <see cref="DofMap"/> (a critical mode or a deformed shape of a model with rotating or generated nodes):
    /// the shape <see cref="Apply"/> takes. Rotations and generated intermediate nodes are left out; a subdivided beam's
    /// intermediate nodes are regenerated on the moved chord.
    /// </summary>
    public static double[] Translations(StructuralModel model, ReadOnlySpan<double> full)
    {
        if (full.Length != model.Dofs.FullCount)
            throw new ArgumentException($"the vector has {full.Length} entries; the model's layout has {model.Dofs.FullCount}", nameof(full));
        var t = new double[3 * model.DefinedNodeCount];
        for (int k = 0; k < model.DefinedNodeCount; k++)
            for (int q = 0; q < 3; q++) t[3 * k + q] = full[model.Dofs.Offset[k] + q];
        return t;
    }

    /// <summary>The largest horizontal extent of the model (the span used for amplitudes given as a fraction of span).</summary>
    public static double PlanSpan(ModelDefinition definition)
    {
        if (definition.Nodes.Count == 0) return 0;
        double dx = definition.Nodes.Max(n => n.X) - definition.Nodes.Min(n => n.X);
        double dy = definition.Nodes.Max(n => n.Y) - definition.Nodes.Min(n => n.Y);
        double dz = definition.Nodes.Max(n => n.Z) - definition.Nodes.Min(n => n.Z);
        return Math.Max(dx, Math.Max(dy, dz));
    }
}
