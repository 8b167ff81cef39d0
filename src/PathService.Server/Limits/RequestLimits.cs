using Microsoft.Extensions.Options;
using PathService.Contracts.V1;
using PathService.Server.Configuration;
using PathService.Server.Errors;

namespace PathService.Server.Limits;

/// <summary>
/// Size limits checked before any model is built, so that an oversized request costs the server nothing but parsing.
/// </summary>
public sealed class RequestLimits(IOptions<PathServiceOptions> options)
{
    private readonly LimitOptions _l = options.Value.Limits;

    public LimitOptions Values => _l;

    /// <summary>Throws RESOURCE_EXHAUSTED when the model has more nodes, bars, springs or supports than the server accepts.</summary>
    public void CheckModelSize(StructureModel? model)
    {
        if (model is null) return;
        if (model.Nodes.Count > _l.MaxNodes)
            throw RpcErrors.TooLarge("model.nodes", "model.nodes", $"the model has {model.Nodes.Count} nodes; this server accepts at most {_l.MaxNodes}");
        if (model.Bars.Count > _l.MaxBars)
            throw RpcErrors.TooLarge("model.bars", "model.bars", $"the model has {model.Bars.Count} bars; this server accepts at most {_l.MaxBars}");
        // Beams are members as bars are, and a subdivided beam adds n − 1 nodes and n elements: both count.
        long elements = 0, generated = 0;
        foreach (var beam in model.Beams)
        {
            long n = beam.HasSubdivisions ? Math.Max(1, beam.Subdivisions) : 1;
            elements += n;
            generated += n - 1;
        }
        if (model.Bars.Count + elements > _l.MaxBars)
            throw RpcErrors.TooLarge("model.beams", "model.bars",
                $"the model has {model.Bars.Count} bars and {elements} beam elements ({model.Beams.Count} beams with their subdivisions); this server accepts at most {_l.MaxBars} members");
        if (model.Nodes.Count + generated > _l.MaxNodes)
            throw RpcErrors.TooLarge("model.beams", "model.nodes",
                $"the model has {model.Nodes.Count} nodes and its beam subdivisions add {generated}; this server accepts at most {_l.MaxNodes} nodes");
        // Springs have a limit of their own (Limits:MaxSprings): ground and link springs together.
        int springs = model.GroundSprings.Count + model.LinkSprings.Count;
        if (springs > _l.MaxSprings)
            throw RpcErrors.TooLarge(model.GroundSprings.Count >= model.LinkSprings.Count ? "model.ground_springs" : "model.link_springs", "model.springs",
                $"the model has {springs} springs ({model.GroundSprings.Count} ground springs, {model.LinkSprings.Count} link springs); this server accepts at most {_l.MaxSprings} springs");
        if (model.Supports.Count > 3 * _l.MaxNodes)
            throw RpcErrors.TooLarge("model.supports", "model.supports", $"the model has {model.Supports.Count} supports; this server accepts at most {3 * _l.MaxNodes}");
    }

    /// <summary>Throws RESOURCE_EXHAUSTED when the caller asks for more points than the server produces in one trace.</summary>
    public void CheckControls(SolverControls? controls)
    {
        if (controls is { HasMaxPoints: true } && controls.MaxPoints > _l.MaxPoints)
            throw RpcErrors.TooLarge("controls.max_points", "controls.max_points", $"max_points is {controls.MaxPoints}; this server traces at most {_l.MaxPoints} points per call");
    }

    /// <summary>The engine's default point budget, capped by the server limit.</summary>
    public int DefaultMaxPoints => Math.Min(100, _l.MaxPoints);

    public TimeSpan? MaxTraceTime => _l.MaxTraceSeconds > 0 ? TimeSpan.FromSeconds(_l.MaxTraceSeconds) : null;
}
