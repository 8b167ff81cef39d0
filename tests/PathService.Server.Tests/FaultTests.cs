using System.Diagnostics;
using Grpc.Core;
using Grpc.Health.V1;
using Grpc.Net.Client;
using PathService.Contracts.V1;
using PathService.Server.Tests.Fixtures;
using Xunit.Abstractions;

namespace PathService.Server.Tests;

/// <summary>Cancellation and deadline storms, client disconnects, graceful shutdown.</summary>
[Collection(ServerCollection.Name)]
public sealed class FaultTests(ITestOutputHelper output)
{
    [Fact]
    public async Task A_storm_of_cancelled_calls_leaves_no_work_no_threads_and_no_memory_behind()
    {
        await using var server = await TestServer.StartAsync(
            ["Limits:MaxConcurrentAnalyses=2", "Limits:MaxQueuedAnalyses=64", "Limits:QueueTimeoutSeconds=10"]);
        var rng = new Random(7);
        const int waves = 10, perWave = 40;
        var threads = new List<int>();
        var heap = new List<long>();
        int cancelled = 0, deadlines = 0, other = 0;
        for (int w = 0; w < waves; w++)
        {
            var calls = Enumerable.Range(0, perWave).Select(async i =>
            {
                using var cts = new CancellationTokenSource(TimeSpan.FromMilliseconds(rng.Next(0, 150)));
                // Half are cancelled by the client, half run into a deadline.
                DateTime? deadline = i % 2 == 0 ? DateTime.UtcNow.AddMilliseconds(rng.Next(1, 150)) : null;
                try
                {
                    using var call = server.Client.TracePath(Requests.LongTrace(), deadline: deadline, cancellationToken: i % 2 == 0 ? default : cts.Token);
                    while (await call.ResponseStream.MoveNext()) { }
                    Interlocked.Increment(ref other);
                }
                catch (RpcException ex) when (ex.StatusCode == StatusCode.Cancelled) { Interlocked.Increment(ref cancelled); }
                // A client whose token or deadline fires while a frame is in flight can see its own stream reset as
                // UNAVAILABLE ("the request was aborted"): still the caller's cancellation or deadline, and the server
                // must free the work all the same, which is what this test checks.
                catch (RpcException ex) when (ex.StatusCode == StatusCode.Unavailable && i % 2 == 1 && cts.IsCancellationRequested) { Interlocked.Increment(ref cancelled); }
                catch (RpcException ex) when (ex.StatusCode == StatusCode.Unavailable && i % 2 == 0 && DateTime.UtcNow >= deadline!.Value) { Interlocked.Increment(ref deadlines); }
                catch (RpcException ex) when (ex.StatusCode == StatusCode.DeadlineExceeded) { Interlocked.Increment(ref deadlines); }
            }).ToArray();
            await Task.WhenAll(calls);
            Assert.True(await server.WaitForIdleAsync(TimeSpan.FromSeconds(10)), $"wave {w}: {server.Gate.Active} analyses still active, {server.Gate.Queued} queued");
            GC.Collect();
            GC.WaitForPendingFinalizers();
            GC.Collect();
            heap.Add(GC.GetTotalMemory(forceFullCollection: true));
            threads.Add(Process.GetCurrentProcess().Threads.Count);
        }
        string line = $"storm: {waves * perWave} calls, {cancelled} cancelled, {deadlines} past their deadline, {other} other; threads per wave [{string.Join(", ", threads)}]; heap MiB per wave [{string.Join(", ", heap.Select(h => (h / 1048576.0).ToString("0.0")))}]";
        output.WriteLine(line);
        Console.WriteLine(line);
        Assert.Equal(waves * perWave, cancelled + deadlines + other);
        Assert.Equal(0, other);
        Assert.Equal(0, server.Gate.Active);
        // Threads bounded: the last waves use no more threads than the early ones plus the pool's slack.
        Assert.True(threads.Skip(waves / 2).Max() <= threads.Take(waves / 2).Max() + 16, $"threads grew: {string.Join(", ", threads)}");
        // No growth trend: the heap after the last wave is within a margin of the heap after the second.
        Assert.True(heap[^1] <= heap[1] * 1.25 + (8 << 20), $"heap grew: {string.Join(", ", heap)}");
    }

    [Fact]
    public async Task A_client_that_disconnects_mid_stream_frees_its_analysis()
    {
        await using var server = await TestServer.StartAsync([]);
        var handler = new SocketsHttpHandler();
        var channel = GrpcChannel.ForAddress(server.GrpcUrl, new GrpcChannelOptions { HttpHandler = handler, DisposeHttpClient = true });
        var client = new StructuralPathService.StructuralPathServiceClient(channel);
        var call = client.TracePath(Requests.LongTrace());
        Assert.True(await call.ResponseStream.MoveNext());
        Assert.True(await call.ResponseStream.MoveNext());
        Assert.Equal(1, server.Gate.Active);
        // No cancellation: the connection just goes away.
        channel.Dispose();
        handler.Dispose();
        Assert.True(await server.WaitForIdleAsync(TimeSpan.FromSeconds(5)), "the analysis kept running after its client vanished");
    }

    [Fact]
    public async Task Shutdown_turns_health_not_serving_first_lets_short_work_finish_and_cancels_the_rest_after_the_grace_period()
    {
        await using var server = await TestServer.StartAsync(["Shutdown:GraceSeconds=2", "Limits:MaxConcurrentAnalyses=2"]);
        var health = new Health.HealthClient(server.Channel);

        // A trace that cannot finish within the grace period (5,000 small steps on an 800-bar cap), and one that needs
        // well under it.
        var (big, bigLoads, bigCrown) = DemoStructures.LatticeCap(16);
        var longCall = server.Client.TracePath(new TracePathRequest
        {
            Model = big, LoadCase = bigLoads,
            Controls = new SolverControls { InitialLoadIncrement = 0.001, MaxIncrementRatio = 1, MaxPoints = 5000, Monitored = { bigCrown } },
        });
        Assert.True(await longCall.ResponseStream.MoveNext());
        var (cap, loads, crown) = DemoStructures.LatticeCap(6);
        var shortRequest = new TracePathRequest
        {
            Model = cap, LoadCase = loads,
            Controls = new SolverControls { InitialLoadIncrement = 0.002, MaxIncrementRatio = 1, MaxPoints = 60, Monitored = { crown } },
        };
        var shortCall = server.Client.TracePath(shortRequest);
        Assert.True(await shortCall.ResponseStream.MoveNext());

        var clock = Stopwatch.StartNew();
        var stopping = server.StopAsync();

        // Health turns NOT_SERVING while the server still answers.
        var status = HealthCheckResponse.Types.ServingStatus.Serving;
        for (int i = 0; i < 100 && status == HealthCheckResponse.Types.ServingStatus.Serving; i++)
        {
            status = (await health.CheckAsync(new HealthCheckRequest())).Status;
            if (status == HealthCheckResponse.Types.ServingStatus.Serving) await Task.Delay(10);
        }
        Assert.Equal(HealthCheckResponse.Types.ServingStatus.NotServing, status);

        // A new analysis is refused during the drain.
        var refused = await Assert.ThrowsAsync<RpcException>(() => Requests.ReadAllAsync(server.Client.TracePath(Requests.Truss())));
        Assert.Equal(StatusCode.Unavailable, refused.StatusCode);

        // The short trace completes normally.
        var rest = new List<TracePathResponse> { shortCall.ResponseStream.Current };
        while (await shortCall.ResponseStream.MoveNext()) rest.Add(shortCall.ResponseStream.Current);
        Assert.NotNull(rest[^1].Summary);

        // The long one is cancelled when the grace period is over, with UNAVAILABLE (retry elsewhere).
        var ex = await Assert.ThrowsAsync<RpcException>(async () => { while (await longCall.ResponseStream.MoveNext()) { } });
        Assert.True(ex.StatusCode == StatusCode.Unavailable, $"{ex.StatusCode}: {ex.Status.Detail}");
        await stopping;
        output.WriteLine($"shutdown took {clock.Elapsed.TotalSeconds:0.00} s with a 2 s grace period");
        Assert.InRange(clock.Elapsed.TotalSeconds, 1.9, 10);
        Assert.Equal(0, server.Gate.Active);
        longCall.Dispose();
        shortCall.Dispose();
    }
}
