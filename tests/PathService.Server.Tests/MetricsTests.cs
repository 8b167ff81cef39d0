using Grpc.Core;
using PathService.Contracts.V1;
using PathService.Server.Tests.Fixtures;

namespace PathService.Server.Tests;

[Collection(ServerCollection.Name)]
public class MetricsTests(ServerFixture server)
{
    [Fact]
    public async Task A_run_that_cuts_steps_records_iterations_cuts_and_a_divergence()
    {
        server.CollectMetrics(); // start from a clean delta
        // Load control cannot pass the truss's limit point at λ ≈ 6.12: steps beyond it are cut until the trace diverges.
        using var call = server.Client.TracePath(new TracePathRequest
        {
            Model = DemoStructures.TwoBarTruss(), LoadCase = DemoStructures.ApexLoad(),
            Controls = new SolverControls { Method = ContinuationMethod.LoadControl, InitialLoadIncrement = 0.25, TargetLoadFactor = 10 },
        });
        var all = new List<TracePathResponse>();
        await foreach (var r in call.ResponseStream.ReadAllAsync()) all.Add(r);
        var summary = all[^1].Summary;
        Assert.Equal(Contracts.V1.StopReason.Diverged, summary.Reason);

        var metrics = server.CollectMetrics();
        Assert.Equal(summary.Points - 1, ServerFixture.Total(metrics, "pathservice.step.iterations"));
        Assert.Equal(summary.Points - 1, ServerFixture.Total(metrics, "pathservice.steps"));
        Assert.Equal(summary.Cuts, ServerFixture.Total(metrics, "pathservice.step.cuts"));
        Assert.True(summary.Cuts > 0);
        Assert.Equal(1, ServerFixture.Total(metrics, "pathservice.divergences"));
        Assert.Equal(1, ServerFixture.Total(metrics, "pathservice.analyses.started"));
        Assert.Equal(1, ServerFixture.Total(metrics, "pathservice.analyses.completed"));
        Assert.Equal(1, ServerFixture.Total(metrics, "pathservice.factorization.duration"));
        Assert.Equal(summary.Refinements, ServerFixture.Total(metrics, "pathservice.solve.refinements"));
        // Every cut carries its reason, rendered as the contract label of the streamed StepCut.reason.
        var cuts = all.Where(r => r.StepCut is not null).Select(r => PathService.Client.Labels.Of(r.StepCut.Reason)).ToList();
        Assert.NotEmpty(cuts);
        foreach (var reason in cuts.Distinct())
            Assert.Equal(cuts.Count(c => c == reason), ServerFixture.Total(metrics, "pathservice.step.cuts", p => HasTag(p, "pathservice.cut_reason", reason)));
        // The completed trace carries rpc.service, rpc.method and its stop reason as a label.
        Assert.Equal(1, ServerFixture.Total(metrics, "pathservice.analyses.completed", p =>
            HasTag(p, "rpc.service", "pathservice.v1.StructuralPathService") && HasTag(p, "rpc.method", "TracePath") && HasTag(p, "pathservice.outcome", "diverged")));
    }

    [Fact]
    public async Task Critical_points_and_refusals_are_counted()
    {
        server.CollectMetrics();
        await foreach (var _ in server.Client.TracePath(new TracePathRequest
        {
            Model = DemoStructures.TwoBarTruss(), LoadCase = DemoStructures.ApexLoad(), Controls = DemoStructures.ThroughBothLimitPoints(),
        }).ResponseStream.ReadAllAsync()) { }
        var bad = DemoStructures.TwoBarTruss();
        bad.Bars[0].Area = 0;
        await Assert.ThrowsAsync<RpcException>(async () =>
        {
            await foreach (var _ in server.Client.TracePath(new TracePathRequest { Model = bad, LoadCase = DemoStructures.ApexLoad() }).ResponseStream.ReadAllAsync()) { }
        });
        var metrics = server.CollectMetrics();
        Assert.Equal(2, ServerFixture.Total(metrics, "pathservice.critical_points", p => HasTag(p, "pathservice.critical_point.kind", "limit_point")));
        Assert.Equal(1, ServerFixture.Total(metrics, "pathservice.analyses.failed", p => HasTag(p, "rpc.method", "TracePath") && HasTag(p, "error.type", "INVALID_ARGUMENT")));
        // The refusal's duration carries its error.type; the completed trace's has none (OpenTelemetry's convention for success).
        Assert.Equal(1, ServerFixture.Total(metrics, "pathservice.analysis.duration", p => HasTag(p, "error.type", "INVALID_ARGUMENT")));
        Assert.Equal(1, ServerFixture.Total(metrics, "pathservice.analysis.duration", p => !HasTag(p, "error.type")));
    }

    [Fact]
    public void Outcomes_cut_reasons_and_kinds_have_one_rendering_the_contract_label()
    {
        // TracePath returns its engine stop reason as the outcome: the frame's rendering of that name and the label of
        // the mapped contract value (which the zero-valued series and the span use) must be the same string.
        foreach (var r in Enum.GetValues<PathService.Engine.Continuation.StopReason>())
        {
            string label = PathService.Client.Labels.Of(PathService.Contracts.Mapping.ResultMapper.ToReason(r));
            Assert.Equal(label, PathService.Server.Telemetry.PathServiceTelemetry.OutcomeLabel(r.ToString()));
            Assert.Equal(label, PathService.Server.Telemetry.PathServiceTelemetry.Label(r));
            Assert.Matches("^[a-z]+(_[a-z]+)*$", label);
        }
        Assert.Equal("target_load_factor_reached", PathService.Server.Telemetry.PathServiceTelemetry.Label(PathService.Engine.Continuation.StopReason.TargetLoadFactorReached));
        Assert.Equal("limit_point", PathService.Server.Telemetry.PathServiceTelemetry.Label(PathService.Engine.Continuation.CriticalPointKind.LimitPoint));
        Assert.Equal("unresolved", PathService.Server.Telemetry.PathServiceTelemetry.Label(PathService.Engine.Continuation.CriticalPointKind.Unresolved));
        foreach (var k in Enum.GetValues<PathService.Engine.Continuation.CriticalPointKind>())
            Assert.NotEqual("unspecified", PathService.Server.Telemetry.PathServiceTelemetry.Label(k));
        foreach (var c in Enum.GetValues<PathService.Engine.Continuation.CutReason>())
        {
            var cut = new PathService.Engine.Continuation.StepCut(1, 1, c, 0.1, 0.05, 3, 1.0, "");
            string label = PathService.Server.Telemetry.PathServiceTelemetry.Label(cut);
            Assert.NotEqual("unspecified", label);
            Assert.Equal(PathService.Server.Telemetry.PathServiceTelemetry.OutcomeLabel(c.ToString()), label);
        }
        // The other outcomes follow the same rule.
        Assert.Equal("not_converged", PathService.Server.Telemetry.PathServiceTelemetry.OutcomeLabel("NotConverged"));
        Assert.Equal("solved", PathService.Server.Telemetry.PathServiceTelemetry.OutcomeLabel("Solved"));
    }

    [Fact]
    public async Task The_analysis_span_carries_rpc_attributes_and_labelled_events()
    {
        var spans = new System.Collections.Concurrent.ConcurrentBag<System.Diagnostics.Activity>();
        using var listener = new System.Diagnostics.ActivityListener
        {
            ShouldListenTo = s => s.Name == PathService.Server.Telemetry.PathServiceTelemetry.SourceName,
            Sample = (ref System.Diagnostics.ActivityCreationOptions<System.Diagnostics.ActivityContext> _) => System.Diagnostics.ActivitySamplingResult.AllDataAndRecorded,
            ActivityStopped = a => spans.Add(a),
        };
        System.Diagnostics.ActivitySource.AddActivityListener(listener);
        // Load control past the limit point: cuts, then DIVERGED.
        await foreach (var _ in server.Client.TracePath(new TracePathRequest
        {
            Model = DemoStructures.TwoBarTruss(), LoadCase = DemoStructures.ApexLoad(),
            Controls = new SolverControls { Method = ContinuationMethod.LoadControl, InitialLoadIncrement = 0.25, TargetLoadFactor = 10 },
        }).ResponseStream.ReadAllAsync()) { }
        var span = spans.First(a => Equals(a.GetTagItem("pathservice.stop_reason"), "diverged"));
        Assert.Equal("pathservice.TracePath", span.DisplayName);
        Assert.Equal("grpc", span.GetTagItem("rpc.system"));
        Assert.Equal("pathservice.v1.StructuralPathService", span.GetTagItem("rpc.service"));
        Assert.Equal("TracePath", span.GetTagItem("rpc.method"));
        Assert.Equal("diverged", span.GetTagItem("pathservice.outcome"));
        var cut = span.Events.First(e => e.Name == "pathservice.step.cut");
        Assert.Contains(cut.Tags, t => t.Key == "pathservice.cut_reason" && t.Value is string v && System.Text.RegularExpressions.Regex.IsMatch(v, "^[a-z]+(_[a-z]+)*$"));
        Assert.Contains(span.Events, e => e.Name == "pathservice.point" && e.Tags.Any(t => t.Key == "pathservice.point.load_factor"));

        // A refusal: error.type with the gRPC status name, span status Error.
        var bad = DemoStructures.TwoBarTruss();
        bad.Bars[0].Area = 0;
        bad.Name = "span-refusal";
        await Assert.ThrowsAsync<RpcException>(async () =>
        {
            await foreach (var _ in server.Client.TracePath(new TracePathRequest { Model = bad, LoadCase = DemoStructures.ApexLoad() }).ResponseStream.ReadAllAsync()) { }
        });
        var refused = spans.Where(a => Equals(a.GetTagItem("error.type"), "INVALID_ARGUMENT")).ToList();
        Assert.NotEmpty(refused);
        Assert.All(refused, a => Assert.Equal(System.Diagnostics.ActivityStatusCode.Error, a.Status));
    }

    [Fact]
    public void Every_instrument_follows_the_naming_rules()
    {
        var instruments = new List<System.Diagnostics.Metrics.Instrument>();
        using (var listener = new System.Diagnostics.Metrics.MeterListener())
        {
            listener.InstrumentPublished = (i, _) => { if (i.Meter.Name == PathService.Server.Telemetry.PathServiceTelemetry.MeterName) lock (instruments) instruments.Add(i); };
            listener.Start();
        }
        var byName = instruments.GroupBy(i => i.Name).Select(g => g.First()).ToList();
        Assert.True(byName.Count >= 15, string.Join(", ", byName.Select(i => i.Name)));
        foreach (var i in byName)
        {
            // pathservice. + dot-separated components, lower snake case inside a component (OpenTelemetry naming guidance).
            Assert.Matches(@"^pathservice(\.[a-z]+(_[a-z]+)*)+$", i.Name);
            // Durations are named .duration and measured in seconds; nothing else is.
            Assert.Equal(i.Name.EndsWith(".duration", StringComparison.Ordinal), i.Unit == "s");
            // Counters count things: a plural noun or a past participle of one (analyses.started), never a unit.
            if (i is System.Diagnostics.Metrics.Counter<long>)
                Assert.Matches(@"(s|\.(started|completed|failed|stalled))$", i.Name);
            // US spelling in names and descriptions.
            Assert.DoesNotMatch("(?i)factoris|behaviour|utilis|analys(e|ing)d?\\b", i.Name + " " + i.Description);
        }
    }

    private static bool HasTag(OpenTelemetry.Metrics.MetricPoint p, string key, string? value = null)
    {
        foreach (var t in p.Tags)
            if (t.Key == key && (value is null || Equals(t.Value, value))) return true;
        return false;
    }
}
