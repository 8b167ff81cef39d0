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
        Assert.Equal(summary.Cuts, ServerFixture.Total(metrics, "pathservice.step_cuts"));
        Assert.True(summary.Cuts > 0);
        Assert.Equal(1, ServerFixture.Total(metrics, "pathservice.divergences"));
        Assert.Equal(1, ServerFixture.Total(metrics, "pathservice.analyses.started"));
        Assert.Equal(1, ServerFixture.Total(metrics, "pathservice.analyses.completed"));
        Assert.Equal(1, ServerFixture.Total(metrics, "pathservice.factorization.time"));
        Assert.Equal(summary.Refinements, ServerFixture.Total(metrics, "pathservice.solve_refinements"));
        // Every cut carries its reason as a tag.
        Assert.Equal(summary.Cuts, ServerFixture.Total(metrics, "pathservice.step_cuts", p => HasTag(p, "reason")));
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
        Assert.Equal(2, ServerFixture.Total(metrics, "pathservice.critical_points", p => HasTag(p, "kind", "LimitPoint")));
        Assert.Equal(1, ServerFixture.Total(metrics, "pathservice.analyses.failed", p => HasTag(p, "reason", "InvalidArgument")));
    }

    private static bool HasTag(OpenTelemetry.Metrics.MetricPoint p, string key, string? value = null)
    {
        foreach (var t in p.Tags)
            if (t.Key == key && (value is null || Equals(t.Value, value))) return true;
        return false;
    }
}
