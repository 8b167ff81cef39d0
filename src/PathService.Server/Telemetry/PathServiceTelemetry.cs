using System.Diagnostics;
using System.Diagnostics.Metrics;
using Grpc.Core;
using Microsoft.Extensions.Options;
using PathService.Client;
using PathService.Contracts.Mapping;
using PathService.Engine.Continuation;
using PathService.Server.Configuration;
using PathService.Server.Hosting;
using PathService.Server.Limits;
using Proto = PathService.Contracts.V1;

namespace PathService.Server.Telemetry;

/// <summary>
/// The service's own instruments (meter "PathService") and its ActivitySource, with one vocabulary: instrument names
/// are <c>pathservice.</c> plus dot-separated components, snake case inside a component (OpenTelemetry naming
/// guidance), durations end in <c>.duration</c> with unit <c>s</c>, counters are plural nouns. Attributes use the
/// OpenTelemetry semantic-convention names where they exist (<c>rpc.service</c>, <c>rpc.method</c>, <c>error.type</c>),
/// else names under <c>pathservice.</c>; enum values are rendered by <see cref="Labels"/> (the contract value's name
/// without its prefix, lower snake case), the rendering people see in the console, CSV files and alerts.
/// One instance per host, created from the host's IMeterFactory so that each host (tests start several) owns its meter.
/// Every counter and gauge has its series from the start (zero-valued, for the attribute values known in advance), so
/// that a fresh pod's /metrics already shows what the autoscaler and the rate alerts read.
/// </summary>
public sealed class PathServiceTelemetry
{
    public const string MeterName = "PathService";
    public const string SourceName = "PathService";

    /// <summary>Attribute names (OpenTelemetry semantic conventions where they exist).</summary>
    public static class Attributes
    {
        public const string RpcSystem = "rpc.system";
        public const string RpcService = "rpc.service";
        public const string RpcMethod = "rpc.method";
        public const string ErrorType = "error.type";
        public const string Outcome = "pathservice.outcome";
        public const string CutReason = "pathservice.cut_reason";
        public const string CriticalPointKind = "pathservice.critical_point.kind";
        public const string StopReason = "pathservice.stop_reason";
    }

    /// <summary>One span per analysis, with an event per converged point, step cut and critical point.</summary>
    public static readonly ActivitySource Source = new(SourceName);

    /// <summary>RPCs that run through the analysis frame (CheckModel validates only and is not counted as an analysis).</summary>
    public static readonly IReadOnlyList<string> AnalysisRpcs = ContractCatalog.Methods.Select(m => m.Name).Where(n => n != "CheckModel").ToList();

    /// <summary>The full name of the service of each analysis RPC (the value of <c>rpc.service</c>).</summary>
    private static readonly IReadOnlyDictionary<string, string> ServiceOf =
        ContractCatalog.Methods.GroupBy(m => m.Name).ToDictionary(g => g.Key, g => g.First().Service.FullName, StringComparer.Ordinal);

    /// <summary>
    /// Values of <c>error.type</c> on <c>pathservice.analyses.failed</c> that are the caller's doing or a normal end,
    /// not a server fault: gRPC status names as the gRPC standard spells them (ABORTED: a caller that stopped reading).
    /// </summary>
    public static readonly IReadOnlyList<string> ExpectedErrorTypes =
        [StatusName(StatusCode.InvalidArgument), StatusName(StatusCode.FailedPrecondition), StatusName(StatusCode.ResourceExhausted),
         StatusName(StatusCode.Cancelled), StatusName(StatusCode.DeadlineExceeded), StatusName(StatusCode.Unavailable), StatusName(StatusCode.Aborted)];

    /// <summary>Values of <c>error.type</c> on <c>pathservice.authentication.failures</c>: no key, or a key the server does not know.</summary>
    public static readonly IReadOnlyList<string> AuthenticationErrorTypes = [StatusName(StatusCode.Unauthenticated), StatusName(StatusCode.PermissionDenied)];

    /// <summary>Default bucket bounds of the analysis duration (seconds); the histogram ends at the configured maximum trace time.</summary>
    private static readonly double[] DurationBounds = [0.005, 0.01, 0.025, 0.05, 0.1, 0.25, 0.5, 1, 2.5, 5, 10, 30, 60, 120, 300, 600, 1800, 3600];

    public Counter<long> AnalysesStarted { get; }
    public Counter<long> AnalysesCompleted { get; }
    public Counter<long> AnalysesFailed { get; }
    public UpDownCounter<long> AnalysesActive { get; }
    public Counter<long> Steps { get; }
    public Histogram<int> StepIterations { get; }
    public Counter<long> StepCuts { get; }
    public Counter<long> Divergences { get; }
    public Counter<long> CriticalPoints { get; }
    public Histogram<double> FactorizationDuration { get; }
    public Counter<long> AuthenticationFailures { get; }
    public Histogram<double> AnalysisDuration { get; }
    public Counter<long> SolveRefinements { get; }
    public Counter<long> StalledWrites { get; }

    /// <summary>Bucket bounds of <see cref="AnalysisDuration"/>, the last one the server's maximum trace time.</summary>
    public IReadOnlyList<double> AnalysisDurationBounds { get; }

    public PathServiceTelemetry(IMeterFactory factory, AnalysisGate gate, IOptions<PathServiceOptions> options)
    {
        var meter = factory.Create(MeterName);
        AnalysesStarted = meter.CreateCounter<long>("pathservice.analyses.started", "{analysis}", "Analyses accepted (rpc.service, rpc.method).");
        AnalysesCompleted = meter.CreateCounter<long>("pathservice.analyses.completed", "{analysis}", "Analyses that ran to an end (rpc.service, rpc.method, pathservice.outcome).");
        AnalysesFailed = meter.CreateCounter<long>("pathservice.analyses.failed", "{analysis}", "Analyses refused or failed (rpc.service, rpc.method, error.type).");
        AnalysesActive = meter.CreateUpDownCounter<long>("pathservice.analyses.active", "{analysis}", "Analyses holding a slot right now.");
        meter.CreateObservableGauge("pathservice.analyses.queued", () => (long)gate.Queued, "{analysis}", "Callers waiting in the bounded queue for an analysis slot.");
        Steps = meter.CreateCounter<long>("pathservice.steps", "{step}", "Converged continuation steps.");
        StepIterations = meter.CreateHistogram<int>("pathservice.step.iterations", "{iteration}", "Newton iterations per converged step.",
            advice: new InstrumentAdvice<int> { HistogramBucketBoundaries = [1, 2, 3, 4, 5, 6, 8, 10, 15, 20, 30, 50] });
        StepCuts = meter.CreateCounter<long>("pathservice.step.cuts", "{cut}", "Step attempts rejected and retried smaller (pathservice.cut_reason).");
        Divergences = meter.CreateCounter<long>("pathservice.divergences", "{trace}", "Traces that ended because a step could not be made to converge.");
        CriticalPoints = meter.CreateCounter<long>("pathservice.critical_points", "{critical_point}", "Critical points located (pathservice.critical_point.kind).");
        FactorizationDuration = meter.CreateHistogram<double>("pathservice.factorization.duration", "s", "Time spent factorizing the tangent stiffness, per trace.",
            advice: new InstrumentAdvice<double> { HistogramBucketBoundaries = [0.001, 0.005, 0.01, 0.05, 0.1, 0.5, 1, 5, 10, 30, 60, 300, 600] });
        AuthenticationFailures = meter.CreateCounter<long>("pathservice.authentication.failures", "{call}", "Calls refused for a missing or unknown API key (error.type).");
        double max = options.Value.Limits.MaxTraceSeconds > 0 ? options.Value.Limits.MaxTraceSeconds : DurationBounds[^1];
        AnalysisDurationBounds = [.. DurationBounds.Where(b => b < max), max];
        AnalysisDuration = meter.CreateHistogram<double>("pathservice.analysis.duration", "s",
            "Wall time of an analysis call from acceptance to its end (rpc.service, rpc.method; error.type when it failed).",
            advice: new InstrumentAdvice<double> { HistogramBucketBoundaries = AnalysisDurationBounds });
        SolveRefinements = meter.CreateCounter<long>("pathservice.solve.refinements", "{refinement}",
            "Iterative-refinement steps taken because a solve with the factorized tangent had a backward error above 1e-12.");
        StalledWrites = meter.CreateCounter<long>("pathservice.writes.stalled", "{write}", "Streamed responses the caller did not accept in time; the call was ended (rpc.service, rpc.method).");
        CreateZeroSeries();
    }

    /// <summary>The canonical gRPC name of a status code (INVALID_ARGUMENT, DEADLINE_EXCEEDED, ...), the value of <c>error.type</c> for a status.</summary>
    public static string StatusName(StatusCode code) => code switch
    {
        StatusCode.OK => "OK",
        StatusCode.Cancelled => "CANCELLED",
        StatusCode.Unknown => "UNKNOWN",
        StatusCode.InvalidArgument => "INVALID_ARGUMENT",
        StatusCode.DeadlineExceeded => "DEADLINE_EXCEEDED",
        StatusCode.NotFound => "NOT_FOUND",
        StatusCode.AlreadyExists => "ALREADY_EXISTS",
        StatusCode.PermissionDenied => "PERMISSION_DENIED",
        StatusCode.Unauthenticated => "UNAUTHENTICATED",
        StatusCode.ResourceExhausted => "RESOURCE_EXHAUSTED",
        StatusCode.FailedPrecondition => "FAILED_PRECONDITION",
        StatusCode.Aborted => "ABORTED",
        StatusCode.OutOfRange => "OUT_OF_RANGE",
        StatusCode.Unimplemented => "UNIMPLEMENTED",
        StatusCode.Internal => "INTERNAL",
        StatusCode.Unavailable => "UNAVAILABLE",
        StatusCode.DataLoss => "DATA_LOSS",
        _ => ((int)code).ToString(System.Globalization.CultureInfo.InvariantCulture),
    };

    /// <summary>The value of <c>error.type</c> for a server fault: the exception's full type name (OpenTelemetry's rule for exceptions).</summary>
    public static string ExceptionType(Exception ex) => ex.GetType().FullName ?? ex.GetType().Name;

    /// <summary>The label of a stop reason: its contract value rendered by <see cref="Labels"/> (diverged, target_load_factor_reached, ...).</summary>
    public static string Label(StopReason reason) => Labels.Of(ResultMapper.ToReason(reason));

    /// <summary>The label of a critical-point kind (limit_point, bifurcation).</summary>
    public static string Label(CriticalPointKind kind) => Labels.Of(ResultMapper.ToKind(kind));

    /// <summary>The label of the reason of a step cut (max_iterations, singular_tangent, ...).</summary>
    public static string Label(StepCut cut) => Labels.Of(ResultMapper.ToCut(cut).Reason);

    /// <summary>
    /// An outcome as the analyses return it, in the one rendering: a stop reason is already a label; the other
    /// outcomes (Solved, Converged, NotConverged, Swept, Cancelled) are turned into lower snake case the same way.
    /// </summary>
    public static string OutcomeLabel(string outcome)
    {
        var sb = new System.Text.StringBuilder(outcome.Length + 8);
        for (int i = 0; i < outcome.Length; i++)
        {
            char c = outcome[i];
            if (char.IsUpper(c) && i > 0 && outcome[i - 1] != '_') sb.Append('_');
            sb.Append(char.ToLowerInvariant(c));
        }
        return sb.ToString();
    }

    /// <summary><c>rpc.service</c> and <c>rpc.method</c> of an analysis RPC.</summary>
    public static TagList RpcTags(string method)
    {
        var tags = new TagList
        {
            { Attributes.RpcService, ServiceOf.TryGetValue(method, out var s) ? s : "" },
            { Attributes.RpcMethod, method },
        };
        return tags;
    }

    private static TagList With(TagList tags, string key, object? value)
    {
        tags.Add(key, value);
        return tags;
    }

    /// <summary>An analysis accepted for processing.</summary>
    public void RecordStarted(string method) => AnalysesStarted.Add(1, RpcTags(method));

    /// <summary>An analysis that ran to its end with <paramref name="outcome"/>; its whole duration.</summary>
    public void RecordCompleted(string method, string outcome, double seconds)
    {
        var rpc = RpcTags(method);
        AnalysesCompleted.Add(1, With(rpc, Attributes.Outcome, OutcomeLabel(outcome)));
        AnalysisDuration.Record(seconds, rpc);
    }

    /// <summary>An analysis refused or failed with <paramref name="errorType"/> (a gRPC status name, or an exception type for a fault).</summary>
    public void RecordFailed(string method, string errorType, double seconds)
    {
        var tags = With(RpcTags(method), Attributes.ErrorType, errorType);
        AnalysesFailed.Add(1, tags);
        AnalysisDuration.Record(seconds, tags);
    }

    /// <summary>A streamed response the caller did not accept in time.</summary>
    public void RecordStalledWrite(string method) => StalledWrites.Add(1, RpcTags(method));

    /// <summary>A call refused for its API key: UNAUTHENTICATED (none) or PERMISSION_DENIED (unknown).</summary>
    public void RecordAuthenticationFailure(StatusCode status) =>
        AuthenticationFailures.Add(1, new KeyValuePair<string, object?>(Attributes.ErrorType, StatusName(status)));

    /// <summary>Marks the analysis span with the RPC it serves (OpenTelemetry RPC attributes).</summary>
    public static void TagRpc(Activity? activity, string method)
    {
        if (activity is null) return;
        activity.SetTag(Attributes.RpcSystem, "grpc");
        foreach (var t in RpcTags(method)) activity.SetTag(t.Key, t.Value);
    }

    /// <summary>Metrics and span events of one trace message, recorded on the compute thread as the analysis produces it.</summary>
    public void Record(Proto.TracePathResponse m, Activity? activity)
    {
        switch (m.UpdateCase)
        {
            case Proto.TracePathResponse.UpdateOneofCase.Point:
                var p = m.Point;
                if (p.Index > 0)
                {
                    Steps.Add(1);
                    StepIterations.Record(p.Iterations);
                }
                activity?.AddEvent(new ActivityEvent("pathservice.point", tags: new ActivityTagsCollection
                {
                    ["pathservice.point.index"] = p.Index, ["pathservice.point.load_factor"] = p.LoadFactor, ["pathservice.point.iterations"] = p.Iterations,
                }));
                break;
            case Proto.TracePathResponse.UpdateOneofCase.StepCut:
                var c = m.StepCut;
                string reason = Labels.Of(c.Reason);
                StepCuts.Add(1, new KeyValuePair<string, object?>(Attributes.CutReason, reason));
                activity?.AddEvent(new ActivityEvent("pathservice.step.cut", tags: new ActivityTagsCollection
                {
                    ["pathservice.step.index"] = c.Step, ["pathservice.step.attempt"] = c.Attempt, [Attributes.CutReason] = reason,
                }));
                break;
            case Proto.TracePathResponse.UpdateOneofCase.CriticalPoint:
                var cp = m.CriticalPoint;
                string kind = Labels.Of(cp.Kind);
                CriticalPoints.Add(1, new KeyValuePair<string, object?>(Attributes.CriticalPointKind, kind));
                activity?.AddEvent(new ActivityEvent("pathservice.critical_point", tags: new ActivityTagsCollection
                {
                    [Attributes.CriticalPointKind] = kind, ["pathservice.critical_point.load_factor"] = cp.LoadFactor,
                }));
                break;
            case Proto.TracePathResponse.UpdateOneofCase.Summary:
                var s = m.Summary;
                if (s.Reason == Proto.StopReason.Diverged) Divergences.Add(1);
                FactorizationDuration.Record(s.FactorizationTime?.ToTimeSpan().TotalSeconds ?? 0);
                SolveRefinements.Add(s.Refinements);
                activity?.SetTag(Attributes.StopReason, Labels.Of(s.Reason));
                activity?.SetTag("pathservice.points", s.Points);
                break;
        }
    }

    /// <summary>Adds zero to every counter for each attribute value known in advance, so that the series exist before the first call.</summary>
    private void CreateZeroSeries()
    {
        AnalysesActive.Add(0);
        Steps.Add(0);
        Divergences.Add(0);
        SolveRefinements.Add(0);
        foreach (var rpc in AnalysisRpcs)
        {
            var rpcTags = RpcTags(rpc);
            AnalysesStarted.Add(0, rpcTags);
            StalledWrites.Add(0, rpcTags);
            foreach (var error in ExpectedErrorTypes) AnalysesFailed.Add(0, With(rpcTags, Attributes.ErrorType, error));
        }
        var trace = RpcTags("TracePath");
        foreach (var reason in Enum.GetValues<StopReason>()) AnalysesCompleted.Add(0, With(trace, Attributes.Outcome, Label(reason)));
        foreach (var reason in Enum.GetValues<Proto.CutReason>().Where(r => r != Proto.CutReason.Unspecified))
            StepCuts.Add(0, new KeyValuePair<string, object?>(Attributes.CutReason, Labels.Of(reason)));
        foreach (var kind in Enum.GetValues<CriticalPointKind>()) CriticalPoints.Add(0, new KeyValuePair<string, object?>(Attributes.CriticalPointKind, Label(kind)));
        foreach (var error in AuthenticationErrorTypes) AuthenticationFailures.Add(0, new KeyValuePair<string, object?>(Attributes.ErrorType, error));
    }
}
