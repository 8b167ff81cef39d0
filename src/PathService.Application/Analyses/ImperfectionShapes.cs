using PathService.Engine;
using PathService.Engine.Analyses;
using PathService.Engine.Model;
using PathService.Engine.Stability;
using Proto = PathService.Contracts.V1;

namespace PathService.Application.Analyses;

/// <summary>
/// Turns an <see cref="Proto.Imperfection"/> into imperfection shapes of the engine (buckling modes of the perfect
/// model, or an explicit per-node shape) and amplitudes in the model's length unit. Validation and orchestration (it
/// runs a buckling analysis when the shape is given by modes), so it lives in the application layer, not the mapping.
/// </summary>
public static class ImperfectionShapes
{
    public const int MaxModeNumber = 20;

    /// <summary>The perfect definition with the imperfection applied; unchanged when <paramref name="imperfection"/> is null.</summary>
    public static ModelDefinition Apply(ModelDefinition perfect, Proto.Imperfection? imperfection, CancellationToken ct = default)
    {
        if (imperfection is null) return perfect;
        var (shapes, weights) = Shapes(perfect, imperfection, ct);
        return Imperfections.Apply(perfect, shapes, weights, ToLength(perfect, imperfection, imperfection.Amplitude, "imperfection.amplitude"));
    }

    /// <summary>
    /// The checks of <see cref="Shapes"/> that need no analysis (mode numbers, shape nodes and values, weights), so a
    /// server can refuse a bad imperfection before it queues for the buckling analysis that shapes a good one.
    /// Throws <see cref="ModelValidationException"/> naming the imperfection field at fault.
    /// </summary>
    public static void Check(ModelDefinition perfect, Proto.Imperfection imp) => Shapes(perfect, imp, default, analyse: false);

    /// <summary>
    /// Shapes and weights; throws <see cref="ModelValidationException"/> naming the imperfection field at fault. Shaping
    /// by buckling modes runs a linearised buckling analysis of the perfect model, which <paramref name="ct"/> cancels.
    /// </summary>
    public static (IReadOnlyList<double[]> Shapes, IReadOnlyList<double> Weights) Shapes(ModelDefinition perfect, Proto.Imperfection imp, CancellationToken ct = default) =>
        Shapes(perfect, imp, ct, analyse: true);

    private static (IReadOnlyList<double[]> Shapes, IReadOnlyList<double> Weights) Shapes(ModelDefinition perfect, Proto.Imperfection imp, CancellationToken ct, bool analyse)
    {
        var findings = new List<ValidationFinding>();
        void Bad(FindingCode code, string field, string message) => findings.Add(new(FindingSeverity.Error, code, field, null, message));
        var shapes = new List<double[]>();
        int n = perfect.Nodes.Count;
        if (imp.Shape.Count > 0)
        {
            var index = perfect.Nodes.Select((nd, k) => (nd.Id, k)).GroupBy(t => t.Id).ToDictionary(g => g.Key, g => g.First().k);
            var shape = new double[3 * n];
            for (int i = 0; i < imp.Shape.Count; i++)
            {
                var v = imp.Shape[i];
                if (!index.TryGetValue(v.Node, out int k)) { findings.Add(new(FindingSeverity.Error, FindingCode.UnknownNode, $"imperfection.shape[{i}].node", v.Node, $"imperfection shape refers to node '{v.Node}', which is not defined")); continue; }
                if (!double.IsFinite(v.X) || !double.IsFinite(v.Y) || !double.IsFinite(v.Z)) { Bad(FindingCode.NonFiniteNumber, $"imperfection.shape[{i}]", $"imperfection shape of node '{v.Node}' is not finite"); continue; }
                shape[3 * k] = v.X; shape[3 * k + 1] = v.Y; shape[3 * k + 2] = v.Z;
            }
            shapes.Add(shape);
        }
        else if (imp.BucklingModes.Count > 0)
        {
            for (int i = 0; i < imp.BucklingModes.Count; i++)
                if (imp.BucklingModes[i] < 1 || imp.BucklingModes[i] > MaxModeNumber)
                    Bad(FindingCode.ImperfectionModeOutOfRange, $"imperfection.buckling_modes[{i}]", $"buckling mode number {imp.BucklingModes[i]} is outside 1..{MaxModeNumber}");
            if (findings.Count == 0 && analyse)
            {
                LinearBucklingResult buckling;
                try { buckling = LinearBucklingAnalysis.Run(StructuralModel.Create(perfect), imp.BucklingModes.Max(), ct: ct); }
                catch (AnalysisInputException ex)
                {
                    // The buckling step is input-dependent: name the imperfection field that asked for it.
                    throw new AnalysisInputException(ex.Reason, "imperfection.buckling_modes", $"the imperfection is shaped by buckling modes, but {ex.Message}");
                }
                foreach (int mode in imp.BucklingModes)
                {
                    if (mode > buckling.Modes.Count) { Bad(FindingCode.ImperfectionModeOutOfRange, "imperfection.buckling_modes", $"the model has only {buckling.Modes.Count} positive buckling modes; mode {mode} does not exist"); break; }
                    shapes.Add(buckling.Modes[mode - 1].Shape);
                }
            }
        }
        else Bad(FindingCode.ImperfectionShapeMissing, "imperfection", "give either buckling_modes or a shape");

        var weights = imp.Weights.Count > 0 ? imp.Weights.ToList() : Enumerable.Repeat(1.0, Math.Max(1, shapes.Count)).ToList();
        if (imp.Weights.Count > 0 && imp.Weights.Count != Math.Max(1, imp.Shape.Count > 0 ? 1 : imp.BucklingModes.Count))
            Bad(FindingCode.ImperfectionWeightsMismatch, "imperfection.weights", $"{imp.Weights.Count} weights for {(imp.Shape.Count > 0 ? 1 : imp.BucklingModes.Count)} shapes");
        if (imp.Weights.Any(w => !double.IsFinite(w))) Bad(FindingCode.NonFiniteNumber, "imperfection.weights", "imperfection weights must be finite");
        if (findings.Count > 0) throw new ModelValidationException(findings);
        return (shapes, weights);
    }

    /// <summary>An amplitude in the model's length unit; checks that it is finite and within ±1e15.</summary>
    public static double ToLength(ModelDefinition perfect, Proto.Imperfection imp, double amplitude, string field)
    {
        if (!double.IsFinite(amplitude))
            throw new ModelValidationException([new(FindingSeverity.Error, FindingCode.NonFiniteNumber, field, null, $"imperfection amplitude {amplitude} is not a finite number")]);
        if (Math.Abs(amplitude) > ModelValidator.MaxMagnitude)
            throw new ModelValidationException([new(FindingSeverity.Error, FindingCode.MagnitudeBeyondLimit, field, null, $"imperfection amplitude {amplitude:G4} is beyond ±{ModelValidator.MaxMagnitude:G1}; check the units")]);
        if (imp.AmplitudeUnit != Proto.AmplitudeUnit.SpanFraction) return amplitude;
        double span = imp.DeclaredSpan > 0 && double.IsFinite(imp.DeclaredSpan) ? imp.DeclaredSpan : Imperfections.PlanSpan(perfect);
        return amplitude * span;
    }
}
