using System.Diagnostics;
using System.Diagnostics.Metrics;

namespace PathService.Server.Telemetry;

/// <summary>
/// The service's own instruments (meter "PathService", names under <c>pathservice.*</c>) and its ActivitySource.
/// One instance per host, created from the host's IMeterFactory so that each host (tests start several) owns its meter.
/// </summary>
public sealed class PathServiceTelemetry
{
    public const string MeterName = "PathService";
    public const string SourceName = "PathService";

    /// <summary>One span per analysis, with an event per converged step, step cut and critical point.</summary>
    public static readonly ActivitySource Source = new(SourceName);

    public Counter<long> AnalysesStarted { get; }
    public Counter<long> AnalysesCompleted { get; }
    public Counter<long> AnalysesFailed { get; }
    public UpDownCounter<long> AnalysesActive { get; }
    public Counter<long> Steps { get; }
    public Histogram<int> IterationsPerStep { get; }
    public Counter<long> StepCuts { get; }
    public Counter<long> Divergences { get; }
    public Counter<long> CriticalPoints { get; }
    public Histogram<double> FactorizationTime { get; }
    public Counter<long> StalledWrites { get; }

    public PathServiceTelemetry(IMeterFactory factory)
    {
        var meter = factory.Create(MeterName);
        AnalysesStarted = meter.CreateCounter<long>("pathservice.analyses.started", "{analysis}", "Analyses accepted (tag rpc).");
        AnalysesCompleted = meter.CreateCounter<long>("pathservice.analyses.completed", "{analysis}", "Analyses that ran to an end (tags rpc, outcome).");
        AnalysesFailed = meter.CreateCounter<long>("pathservice.analyses.failed", "{analysis}", "Analyses refused or failed (tags rpc, reason).");
        AnalysesActive = meter.CreateUpDownCounter<long>("pathservice.analyses.active", "{analysis}", "Analyses holding a worker right now.");
        Steps = meter.CreateCounter<long>("pathservice.steps", "{step}", "Converged continuation steps.");
        IterationsPerStep = meter.CreateHistogram<int>("pathservice.step.iterations", "{iteration}", "Newton iterations per converged step.",
            advice: new InstrumentAdvice<int> { HistogramBucketBoundaries = [1, 2, 3, 4, 5, 6, 8, 10, 15, 20, 30, 50] });
        StepCuts = meter.CreateCounter<long>("pathservice.step_cuts", "{cut}", "Step attempts rejected and retried smaller (tag reason).");
        Divergences = meter.CreateCounter<long>("pathservice.divergences", "{trace}", "Traces that ended because a step could not be made to converge.");
        CriticalPoints = meter.CreateCounter<long>("pathservice.critical_points", "{point}", "Critical points located (tag kind).");
        FactorizationTime = meter.CreateHistogram<double>("pathservice.factorization.time", "s", "Time spent factorising the tangent stiffness, per trace.",
            advice: new InstrumentAdvice<double> { HistogramBucketBoundaries = [0.001, 0.005, 0.01, 0.05, 0.1, 0.5, 1, 5, 10, 30, 60, 300, 600] });
        StalledWrites = meter.CreateCounter<long>("pathservice.writes.stalled", "{write}", "Streamed responses the caller did not accept in time; the call was ended (tag rpc).");
    }
}
