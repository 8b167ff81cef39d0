using PathService.Application.Errors;
using PathService.Contracts.V1;
using PathService.Engine.Model;

namespace PathService.Application.Validation;

/// <summary>
/// The limits of <see cref="AnalysisLimits"/> that are properties of the request: sizes checked before any model is
/// built (so an oversized request costs nothing but parsing), and the memory its analysis needs, estimated from the
/// model before anything is factorised.
/// </summary>
public sealed class RequestChecks(AnalysisLimits limits)
{
    /// <summary>Refuses (OverLimit) a model with more nodes, members (bars and beam elements), springs or supports than the limits allow.</summary>
    public void ModelSize(StructureModel? model)
    {
        if (model is null) return;
        var l = limits;
        if (model.Nodes.Count > l.MaxNodes)
            throw Refusals.TooLarge("model.nodes", "model.nodes", $"the model has {model.Nodes.Count} nodes; this server accepts at most {l.MaxNodes}");
        if (model.Bars.Count > l.MaxBars)
            throw Refusals.TooLarge("model.bars", "model.bars", $"the model has {model.Bars.Count} bars; this server accepts at most {l.MaxBars}");
        // Beams are members as bars are, and a subdivided beam adds n − 1 nodes and n elements: both count.
        long elements = 0, generated = 0;
        foreach (var beam in model.Beams)
        {
            long n = beam.HasSubdivisions ? Math.Max(1, beam.Subdivisions) : 1;
            elements += n;
            generated += n - 1;
        }
        if (model.Bars.Count + elements > l.MaxBars)
            throw Refusals.TooLarge("model.beams", "model.bars",
                $"the model has {model.Bars.Count} bars and {elements} beam elements ({model.Beams.Count} beams with their subdivisions); this server accepts at most {l.MaxBars} members");
        if (model.Nodes.Count + generated > l.MaxNodes)
            throw Refusals.TooLarge("model.beams", "model.nodes",
                $"the model has {model.Nodes.Count} nodes and its beam subdivisions add {generated}; this server accepts at most {l.MaxNodes} nodes");
        // Springs have a limit of their own: ground and link springs together.
        int springs = model.GroundSprings.Count + model.LinkSprings.Count;
        if (springs > l.MaxSprings)
            throw Refusals.TooLarge(model.GroundSprings.Count >= model.LinkSprings.Count ? "model.ground_springs" : "model.link_springs", "model.springs",
                $"the model has {springs} springs ({model.GroundSprings.Count} ground springs, {model.LinkSprings.Count} link springs); this server accepts at most {l.MaxSprings} springs");
        if (model.Supports.Count > 3 * l.MaxNodes)
            throw Refusals.TooLarge("model.supports", "model.supports", $"the model has {model.Supports.Count} supports; this server accepts at most {3 * l.MaxNodes}");
    }

    /// <summary>Refuses (OverLimit) controls that ask for more points than one trace may produce.</summary>
    public void PointBudget(Contracts.V1.SolverControls? controls)
    {
        if (controls is { HasMaxPoints: true } && controls.MaxPoints > limits.MaxPoints)
            throw Refusals.TooLarge("controls.max_points", "controls.max_points", $"max_points is {controls.MaxPoints}; this server traces at most {limits.MaxPoints} points per call");
    }

    /// <summary>
    /// True when the cheap upper bound of the memory (a dense factor) exceeds the budget, so that the exact estimate
    /// (ordering and symbolic analysis) must follow with <see cref="Memory"/> when the analysis runs.
    /// </summary>
    public bool MemoryNeedsExactEstimate(StructuralModel model, int extraVectors)
    {
        double mib = limits.MaxAnalysisMemoryMiB;
        return mib > 0 && AnalysisMemory.Upper(model, extraVectors) > (long)(mib * 1024 * 1024);
    }

    /// <summary>
    /// Refuses (OverLimit, subject <c>analysis_memory</c>) an analysis whose estimated memory exceeds the budget. Runs the
    /// symbolic analysis when the cheap bound is above the budget, so call it when the analysis runs, with its token.
    /// </summary>
    public void Memory(StructuralModel model, int extraVectors, CancellationToken ct = default)
    {
        double mib = limits.MaxAnalysisMemoryMiB;
        if (mib <= 0) return;
        long budget = (long)(mib * 1024 * 1024);
        var estimate = AnalysisMemory.Of(model, budget, extraVectors, ct);
        if (estimate.Bytes > budget)
            throw Refusals.TooLarge("model", "analysis_memory",
                $"the analysis of this model needs about {estimate.Bytes / (1024.0 * 1024):F0} MiB ({estimate.FactorEntries} factor entries for {model.Dofs.FreeCount} free DOFs); this server allows {mib:F0} MiB per analysis");
    }
}
