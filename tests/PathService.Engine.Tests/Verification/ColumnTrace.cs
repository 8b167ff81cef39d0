using PathService.Engine.Continuation;
using PathService.Engine.Model;

namespace PathService.Engine.Tests.Verification;

/// <summary>
/// The trace the beam verification tests use to find a column's bifurcation: arc length from the straight state, tight
/// residual, stopping at the first located critical point, watching the head's axial displacement.
/// </summary>
internal static class ColumnTrace
{
    public static SolverControls ToFirstBifurcation(string head = "head") => new()
    {
        Method = ContinuationMethod.ArcLength,
        InitialLoadIncrement = 0.2,
        MaxPoints = 60,
        ResidualTolerance = 1e-12,
        DetectCriticalPoints = true,
        StopAtFirstCriticalPoint = true,
        CriticalPointTolerance = 1e-10,
        Monitored = [new DofReference(head, Axis.X)],
    };

    public static CriticalPoint FirstCriticalPoint(StructuralModel model) =>
        new PathTracer(model, ToFirstBifurcation()).Trace().OfType<CriticalPoint>().First();
}
