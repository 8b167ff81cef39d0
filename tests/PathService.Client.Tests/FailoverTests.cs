using Grpc.Core;
using PathService.Client.Building;
using PathService.Client.Calls;
using PathService.Contracts.V1;

namespace PathService.Client.Tests;

/// <summary>
/// What the connection does when an instance stops taking work (real servers on loopback, one of them draining as in
/// a rolling update: health NOT_SERVING, new analyses UNAVAILABLE): unary calls are retried by the channel's retry
/// policy on the next instance, and a trace's restart asks every instance's health and skips those not serving.
/// </summary>
public class FailoverTests
{
    private static TracePathRequest Truss()
    {
        var b = new ModelBuilder("low arch pair")
            .Node("a", -4, 0, 0).Node("top", 0, 0.35, 0).Node("c", 4, 0, 0)
            .Bar("ab", "a", "top", 2e8, 1.2e-3).Bar("bc", "top", "c", 2e8, 1.2e-3)
            .Support("a").Support("c").Support("top", Direction.X, Direction.Z)
            .ReferenceLoad("top", 0, -10, 0);
        return b.TraceRequest(new SolverControls { InitialLoadIncrement = 0.5, MaxPoints = 20, Monitored = { new DofRef { Node = "top", Direction = Direction.Y } } });
    }

    private static AnalyzeLinearRequest Linear() => new() { Model = Truss().Model, LoadCase = Truss().LoadCase };

    [Fact]
    public async Task Unary_calls_that_meet_a_draining_instance_are_retried_on_the_next_one_by_the_channel_retry_policy()
    {
        await using var draining = await LoopbackServer.StartAsync();
        await using var healthy = await LoopbackServer.StartAsync();
        await draining.DrainAsync();
        Uri[] addresses = [draining.GrpcUrl, healthy.GrpcUrl];

        // Round-robin alternates between the two, so half the first attempts meet UNAVAILABLE: all still succeed.
        await using (var retrying = new PathServiceConnection(new ConnectionOptions { Addresses = addresses, Retries = 3 }))
            for (int i = 0; i < 6; i++)
                Assert.True((await retrying.LinearAsync(Linear())).State.Nodes.Count == 3);

        // Without the policy the same calls fail on the draining instance: the retries above are real.
        await using var once = new PathServiceConnection(new ConnectionOptions { Addresses = addresses, Retries = 0 });
        int unavailable = 0;
        for (int i = 0; i < 6; i++)
        {
            try { await once.LinearAsync(Linear()); }
            catch (RpcException ex) when (ex.StatusCode == StatusCode.Unavailable) { unavailable++; }
        }
        // Half of them once both connections are ready; more while the draining one is connected first (measured: 4).
        Assert.InRange(unavailable, 2, 6);
    }

    [Fact]
    public async Task A_trace_restart_skips_instances_whose_health_reports_not_serving()
    {
        await using var a = await LoopbackServer.StartAsync();
        await using var b = await LoopbackServer.StartAsync();
        await using var c = await LoopbackServer.StartAsync();
        await a.DrainAsync();
        await b.DrainAsync();
        var notices = new List<string>();
        await using var connection = new PathServiceConnection(new ConnectionOptions
        {
            Addresses = [a.GrpcUrl, b.GrpcUrl, c.GrpcUrl], Notice = n => { lock (notices) notices.Add(n); },
        });
        // Two traces in a row: round-robin gives consecutive calls different instances, so at least one first attempt
        // meets a draining instance and is restarted after the health checks.
        for (int i = 0; i < 2; i++)
        {
            var updates = new List<TracePathResponse>();
            await foreach (var u in connection.TraceAsync(Truss())) updates.Add(u);
            Assert.Equal(TracePathResponse.UpdateOneofCase.Summary, updates[^1].UpdateCase);
            Assert.Equal(20, updates.Count(u => u.UpdateCase == TracePathResponse.UpdateOneofCase.Point));
        }
        Assert.Contains(notices, n => n.StartsWith("the trace was dropped (Unavailable", StringComparison.Ordinal));
        Assert.Contains(notices, n => n == $"skipping {a.GrpcUrl}: it reports NotServing");
        Assert.Contains(notices, n => n == $"skipping {b.GrpcUrl}: it reports NotServing");
        Assert.DoesNotContain(notices, n => n.Contains(c.GrpcUrl.ToString()));
    }

    [Fact]
    public async Task When_no_instance_reports_serving_the_health_step_fails_with_unavailable()
    {
        await using var a = await LoopbackServer.StartAsync();
        await a.DrainAsync();
        await using var connection = new PathServiceConnection(new ConnectionOptions { Addresses = [a.GrpcUrl] });
        var ex = await Assert.ThrowsAsync<RpcException>(async () => { await foreach (var _ in connection.TraceAsync(Truss())) { } });
        Assert.Equal(StatusCode.Unavailable, ex.StatusCode);
        Assert.Contains("no instance reports SERVING", ex.Status.Detail);
    }
}
