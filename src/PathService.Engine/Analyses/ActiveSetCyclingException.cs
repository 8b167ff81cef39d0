namespace PathService.Engine.Analyses;

/// <summary>
/// Thrown by the linear static analysis when its active-set iteration over tension-only and compression-only bars
/// finds no consistent set of slack bars: a set of slack bars repeats (the iteration cycles) or the iteration cap is
/// reached. Names the bars that keep switching. The model is valid; the linear analysis cannot answer for it (the
/// nonlinear trace, which follows the load in steps, may). An input fault: a transport answers FAILED_PRECONDITION
/// with reason ACTIVE_SET_CYCLING.
/// </summary>
public sealed class ActiveSetCyclingException(IReadOnlyList<string> barIds, int iterations, string message)
    : AnalysisInputException("ACTIVE_SET_CYCLING", "model.bars", message)
{
    /// <summary>Ids of the one-sided bars that switched between taut and slack within the cycle (or in the last iterations).</summary>
    public IReadOnlyList<string> BarIds { get; } = barIds;

    /// <summary>Active-set iterations made before giving up.</summary>
    public int Iterations { get; } = iterations;
}
