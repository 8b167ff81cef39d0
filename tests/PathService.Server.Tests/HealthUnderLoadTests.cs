using Grpc.Core;
using Grpc.Health.V1;
using PathService.Contracts.V1;
using PathService.Engine.Sparse;
using PathService.Server.Tests.Fixtures;

namespace PathService.Server.Tests;

/// <summary>
/// With every analysis slot computing a large model, the server still answers health checks (gRPC and HTTP): analyses
/// run on compute threads of their own, with helpers from the shared compute budget, not on the thread pool that serves
/// Kestrel. The latency under load is a rate, measured by the load command (docs/reliability.md), not asserted here.
/// </summary>
// In the shared server's collection: the fixture's metric tests read process-wide meters, which these tests' long
// analyses would otherwise disturb.
[Collection(ServerCollection.Name)]
public class HealthUnderLoadTests
{
    [Fact]
    public async Task Health_answers_while_every_slot_computes_a_large_model()
    {
        int slots = Math.Max(2, Environment.ProcessorCount);
        await using var server = await TestServer.StartAsync([$"Limits:MaxConcurrentAnalyses={slots}", "Limits:MaxQueuedAnalyses=0"]);
        Assert.Equal(Environment.ProcessorCount, ComputeBudget.Capacity);
        // 800-bar caps, thousands of small steps each: far longer than the checks below.
        var (model, loads, crown) = DemoStructures.LatticeCap(16);
        var request = new TracePathRequest
        {
            Model = model, LoadCase = loads,
            Controls = new SolverControls { InitialLoadIncrement = 0.0005, MaxIncrementRatio = 1, MaxPoints = 5000, DetectCriticalPoints = false, Monitored = { crown } },
        };
        using var cts = new CancellationTokenSource();
        var calls = Enumerable.Range(0, slots).Select(_ => server.Client.TracePath(request, cancellationToken: cts.Token)).ToList();
        // Every stream is read, so no analysis waits for its client: all slots compute.
        var readers = calls.Select(c => Task.Run(async () =>
        {
            try { while (await c.ResponseStream.MoveNext()) { } } catch (RpcException) { }
        })).ToList();
        foreach (var c in calls) Assert.True(await c.ResponseHeadersAsync.WaitAsync(TimeSpan.FromSeconds(30)) is not null);
        var until = DateTime.UtcNow.AddSeconds(30);
        while (server.Gate.Active < slots && DateTime.UtcNow < until) await Task.Delay(10);
        Assert.Equal(slots, server.Gate.Active);

        // A health client on a connection of its own, as a kubelet probe would be.
        using var healthChannel = Grpc.Net.Client.GrpcChannel.ForAddress(server.GrpcUrl);
        var health = new Health.HealthClient(healthChannel);
        using var http = new HttpClient { BaseAddress = new Uri(server.HttpUrl) };
        for (int i = 0; i < 20; i++)
        {
            var reply = await health.CheckAsync(new HealthCheckRequest(), deadline: DateTime.UtcNow.AddSeconds(10));
            Assert.Equal(HealthCheckResponse.Types.ServingStatus.Serving, reply.Status);
            var service = await health.CheckAsync(new HealthCheckRequest { Service = "pathservice.v1.StructuralPathService" }, deadline: DateTime.UtcNow.AddSeconds(10));
            Assert.Equal(HealthCheckResponse.Types.ServingStatus.Serving, service.Status);
            using var healthz = await http.GetAsync("/healthz");
            Assert.True(healthz.IsSuccessStatusCode, $"/healthz answered {(int)healthz.StatusCode}");
            // The analyses are still running: the checks were answered under full load, not after it.
            Assert.Equal(slots, server.Gate.Active);
            await Task.Delay(25);
        }
        cts.Cancel();
        await Task.WhenAll(readers);
        Assert.True(await server.WaitForIdleAsync(TimeSpan.FromSeconds(10)));
    }
}
