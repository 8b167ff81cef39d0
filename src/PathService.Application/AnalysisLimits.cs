namespace PathService.Application;

/// <summary>
/// Limits that are properties of the request itself (counts, sizes, the memory its analysis needs, how long it may
/// run), checked by the application layer before any numerics. The server fills them from its configuration
/// (<c>PathService:Limits</c>); the CLI's in-process backend uses <see cref="Default"/>, the server's defaults, so that
/// a request refused by a default server is refused in-process too, with the same reason and field.
/// </summary>
public sealed record AnalysisLimits
{
    /// <summary>Largest number of nodes in one model.</summary>
    public int MaxNodes { get; init; } = 20_000;

    /// <summary>Largest number of bars in one model (springs are counted apart).</summary>
    public int MaxBars { get; init; } = 60_000;

    /// <summary>Largest number of springs (ground and link springs together) in one model.</summary>
    public int MaxSprings { get; init; } = 20_000;

    /// <summary>Upper bound of controls.max_points; the default point budget is the smaller of 100 and this.</summary>
    public int MaxPoints { get; init; } = 5_000;

    /// <summary>Largest mode_count of a linearised buckling analysis.</summary>
    public int MaxBucklingModes { get; init; } = 20;

    /// <summary>Largest number of amplitudes in one imperfection sweep.</summary>
    public int MaxAmplitudes { get; init; } = 50;

    /// <summary>Largest IFC file read, in bytes (0 or less = none).</summary>
    public long MaxIfcBytes { get; init; } = 16 * 1024 * 1024;

    /// <summary>Memory budget of one analysis in MiB, estimated from the model before anything is factorised (0 = none).</summary>
    public double MaxAnalysisMemoryMiB { get; init; } = 1024;

    /// <summary>Time cap of one trace, linear or buckling analysis or IFC import (null = none); a caller's smaller wall-time limit wins.</summary>
    public TimeSpan? MaxAnalysisTime { get; init; } = TimeSpan.FromSeconds(600);

    /// <summary>Time limit of one imperfection sweep as a whole (null = none).</summary>
    public TimeSpan? MaxSweepTime { get; init; } = TimeSpan.FromSeconds(600);

    /// <summary>The point budget of a trace whose controls set none: the engine's 100, capped by <see cref="MaxPoints"/>.</summary>
    public int DefaultMaxPoints => Math.Min(100, MaxPoints);

    /// <summary>The server's default limits.</summary>
    public static AnalysisLimits Default { get; } = new();
}
