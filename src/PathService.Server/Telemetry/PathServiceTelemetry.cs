using System.Diagnostics;
using System.Diagnostics.Metrics;
using Microsoft.Extensions.Options;
using PathService.Engine.Continuation;
using PathService.Server.Configuration;
using PathService.Server.Hosting;
using PathService.Server.Limits;

namespace PathService.Server.Telemetry;

/// <summary>
/// The service's own instruments (meter "PathService", names under <c>pathservice.*</c>) and its ActivitySource.
/// One instance per host, created from the host's IMeterFactory so that each host (tests start several) owns its meter.
/// Every counter and gauge has its series from the start (zero-valued, for the tag values known in advance), so that a
/// fresh pod's /metrics already shows what the autoscaler and the rate alerts read.
/// </summary>
public sealed class PathServiceTelemetry
{
    public const string MeterName = "PathService";
    public const string SourceName = "PathService";

    /// <summary>One span per analysis, with an event per converged step, step cut and critical point.</summary>
    public static readonly ActivitySource Source = new(SourceName);

    /// <summary>RPCs that run through the analysis frame (CheckModel validates only and is not counted as an analysis).</summary>
    public static readonly IReadOnlyList<string> AnalysisRpcs = ContractCatalog.Methods.Select(m => m.Name).Where(n => n != "CheckModel").ToList();

    /// <summary>Reasons of <c>pathservice.analyses.failed</c> that are the caller's doing or a normal end, not a server fault.</summary>
    public static readonly IReadOnlyList<string> ExpectedFailureReasons =
        ["InvalidArgument", "FailedPrecondition", "ResourceExhausted", "Cancelled", "DeadlineExceeded", "Unavailable"];

    /// <summary>Reasons of <c>pathservice.authentication.failures</c>.</summary>
    public static readonly IReadOnlyList<string> AuthenticationFailureReasons = ["MissingKey", "UnknownKey"];

    /// <summary>Default bucket bounds of the analysis duration (seconds); the histogram ends at the configured maximum trace time.</summary>
    private static readonly double[] DurationBounds = [0.005, 0.01, 0.025, 0.05, 0.1, 0.25, 0.5, 1, 2.5, 5, 10, 30, 60, 120, 300, 600, 1800, 3600];

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
    public Counter<long> AuthenticationFailures { get; }
    public Histogram<double> AnalysisDuration { get; }
    public Counter<long> SolveRefinements { get; }
    public Counter<long> StalledWrites { get; }

    /// <summary>Bucket bounds of <see cref="AnalysisDuration"/>, the last one the server's maximum trace time.</summary>
    public IReadOnlyList<double> AnalysisDurationBounds { get; }

    public PathServiceTelemetry(IMeterFactory factory, AnalysisGate gate, IOptions<PathServiceOptions> options)
    {
        var meter = factory.Create(MeterName);
        AnalysesStarted = meter.CreateCounter<long>("pathservice.analyses.started", "{analysis}", "Analyses accepted (tag rpc).");
        AnalysesCompleted = meter.CreateCounter<long>("pathservice.analyses.completed", "{analysis}", "Analyses that ran to an end (tags rpc, outcome).");
        AnalysesFailed = meter.CreateCounter<long>("pathservice.analyses.failed", "{analysis}", "Analyses refused or failed (tags rpc, reason).");
        AnalysesActive = meter.CreateUpDownCounter<long>("pathservice.analyses.active", "{analysis}", "Analyses holding a worker right now.");
        meter.CreateObservableGauge("pathservice.analyses.queued", () => (long)gate.Queued, "{analysis}", "Callers waiting in the bounded queue for an analysis slot.");
        Steps = meter.CreateCounter<long>("pathservice.steps", "{step}", "Converged continuation steps.");
        IterationsPerStep = meter.CreateHistogram<int>("pathservice.step.iterations", "{iteration}", "Newton iterations per converged step.",
            advice: new InstrumentAdvice<int> { HistogramBucketBoundaries = [1, 2, 3, 4, 5, 6, 8, 10, 15, 20, 30, 50] });
        StepCuts = meter.CreateCounter<long>("pathservice.step_cuts", "{cut}", "Step attempts rejected and retried smaller (tag reason).");
        Divergences = meter.CreateCounter<long>("pathservice.divergences", "{trace}", "Traces that ended because a step could not be made to converge.");
        CriticalPoints = meter.CreateCounter<long>("pathservice.critical_points", "{point}", "Critical points located (tag kind).");
        FactorizationTime = meter.CreateHistogram<double>("pathservice.factorization.time", "s", "Time spent factorising the tangent stiffness, per trace.",
            advice: new InstrumentAdvice<double> { HistogramBucketBoundaries = [0.001, 0.005, 0.01, 0.05, 0.1, 0.5, 1, 5, 10, 30, 60, 300, 600] });
        AuthenticationFailures = meter.CreateCounter<long>("pathservice.authentication.failures", "{call}", "Calls refused for a missing or unknown API key (tag reason).");
        double max = options.Value.Limits.MaxTraceSeconds > 0 ? options.Value.Limits.MaxTraceSeconds : DurationBounds[^1];
        AnalysisDurationBounds = [.. DurationBounds.Where(b => b < max), max];
        AnalysisDuration = meter.CreateHistogram<double>("pathservice.analysis.duration", "s", "Wall time of an analysis call from acceptance to its end (tags rpc, status).",
            advice: new InstrumentAdvice<double> { HistogramBucketBoundaries = AnalysisDurationBounds });
        SolveRefinements = meter.CreateCounter<long>("pathservice.solve_refinements", "{step}",
            "Iterative-refinement steps taken because a solve with the factorised tangent had a backward error above 1e-12.");
        StalledWrites = meter.CreateCounter<long>("pathservice.writes.stalled", "{write}", "Streamed responses the caller did not accept in time; the call was ended (tag rpc).");
        CreateZeroSeries();
    }

    /// <summary>Adds zero to every counter for each tag value known in advance, so that the series exist before the first call.</summary>
    private void CreateZeroSeries()
    {
        AnalysesActive.Add(0);
        Steps.Add(0);
        Divergences.Add(0);
        SolveRefinements.Add(0);
        foreach (var rpc in AnalysisRpcs)
        {
            var rpcTag = new KeyValuePair<string, object?>("rpc", rpc);
            AnalysesStarted.Add(0, rpcTag);
            StalledWrites.Add(0, rpcTag);
            foreach (var reason in ExpectedFailureReasons) AnalysesFailed.Add(0, rpcTag, new("reason", reason));
        }
        foreach (var outcome in Enum.GetNames<StopReason>()) AnalysesCompleted.Add(0, new("rpc", "TracePath"), new("outcome", outcome));
        foreach (var reason in Enum.GetNames<CutReason>()) StepCuts.Add(0, new KeyValuePair<string, object?>("reason", reason));
        foreach (var kind in Enum.GetNames<CriticalPointKind>()) CriticalPoints.Add(0, new KeyValuePair<string, object?>("kind", kind));
        foreach (var reason in AuthenticationFailureReasons) AuthenticationFailures.Add(0, new KeyValuePair<string, object?>("reason", reason));
    }
}
