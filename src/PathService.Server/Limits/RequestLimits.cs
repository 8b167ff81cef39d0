using Microsoft.Extensions.Options;
using PathService.Application;
using PathService.Server.Configuration;

namespace PathService.Server.Limits;

/// <summary>
/// The configured limits: the server's own (slots, queue, stalled writes) in <see cref="Values"/>, and those that are
/// properties of the request (sizes, counts, memory, time caps) as the application layer takes them, in <see cref="Analysis"/>.
/// </summary>
public sealed class RequestLimits(IOptions<PathServiceOptions> options)
{
    private readonly LimitOptions _l = options.Value.Limits;

    public LimitOptions Values => _l;

    /// <summary>The application layer's limits from this configuration (IFC files are bounded by the request size limit).</summary>
    public AnalysisLimits Analysis { get; } = new()
    {
        MaxNodes = options.Value.Limits.MaxNodes,
        MaxBars = options.Value.Limits.MaxBars,
        MaxSprings = options.Value.Limits.MaxSprings,
        MaxPoints = options.Value.Limits.MaxPoints,
        MaxBucklingModes = options.Value.Limits.MaxBucklingModes,
        MaxIfcBytes = options.Value.Limits.MaxRequestBytes,
        MaxAnalysisMemoryMiB = options.Value.Limits.MaxAnalysisMemoryMiB,
        MaxAnalysisTime = Seconds(options.Value.Limits.MaxTraceSeconds),
        MaxSweepTime = Seconds(options.Value.Limits.MaxSweepSeconds),
    };

    private static TimeSpan? Seconds(double s) => s > 0 ? TimeSpan.FromSeconds(s) : null;
}
