using Grpc.Core;
using PathService.Contracts.V1;
using PathService.Server.Tests.Fixtures;

namespace PathService.Server.Tests;

[Collection(ServerCollection.Name)]
public class CancellationTests(ServerFixture server)
{
    /// <summary>A trace that would run for a long time: thousands of tiny steps on a 120-bar cap.</summary>
    private static TracePathRequest LongTrace()
    {
        var (model, loads, crown) = DemoStructures.LatticeCap(6);
        return new TracePathRequest
        {
            Model = model, LoadCase = loads,
            Controls = new SolverControls { InitialLoadIncrement = 0.002, MaxIncrementRatio = 1, MaxPoints = 5000, Monitored = { crown } },
        };
    }

    [Fact]
    public async Task Cancelling_mid_trace_stops_the_analysis_and_the_active_gauge_returns_to_zero()
    {
        server.CollectMetrics();
        using var cts = new CancellationTokenSource();
        using var call = server.Client.TracePath(LongTrace(), cancellationToken: cts.Token);
        Assert.True(await call.ResponseStream.MoveNext());
        Assert.True(await call.ResponseStream.MoveNext());
        Assert.Equal(1, server.Gate.Active);
        Assert.Equal(1, ServerFixture.Total(server.CollectMetrics(), "pathservice.analyses.active"));

        cts.Cancel();
        var ex = await Assert.ThrowsAsync<RpcException>(async () => { while (await call.ResponseStream.MoveNext()) { } });
        Assert.Equal(StatusCode.Cancelled, ex.StatusCode);

        Assert.True(await server.WaitForIdleAsync(TimeSpan.FromSeconds(5)), "the analysis kept its slot after cancellation");
        // The up-down counter is exported cumulatively: its value is the number of analyses running now.
        Assert.Equal(0, ServerFixture.Total(server.CollectMetrics(), "pathservice.analyses.active"));
    }

    [Fact]
    public async Task A_deadline_is_honoured_and_frees_the_analysis()
    {
        // A trace that needs far longer than the deadline: small steps on a larger cap, no location work to end it early.
        var (model, loads, crown) = DemoStructures.LatticeCap(10);
        var request = new TracePathRequest
        {
            Model = model, LoadCase = loads,
            Controls = new SolverControls { InitialLoadIncrement = 0.0005, MaxIncrementRatio = 1, MaxPoints = 5000, DetectCriticalPoints = false, Monitored = { crown } },
        };
        using var call = server.Client.TracePath(request, deadline: DateTime.UtcNow.AddMilliseconds(400));
        int received = 0;
        string? ended = null;
        var ex = await Assert.ThrowsAsync<RpcException>(async () =>
        {
            while (await call.ResponseStream.MoveNext())
            {
                received++;
                if (call.ResponseStream.Current.Summary is { } s) ended = $"{s.Reason}: {s.Message} after {s.WallTime}";
            }
            Assert.Fail($"the trace ended before its deadline ({ended})");
        });
        Assert.Equal(StatusCode.DeadlineExceeded, ex.StatusCode);
        Assert.True(received > 0, "no point arrived before the deadline");
        Assert.True(await server.WaitForIdleAsync(TimeSpan.FromSeconds(5)), "the analysis kept running past its deadline");
    }

    [Fact]
    public async Task Beyond_the_concurrency_limit_a_call_is_turned_away_with_a_retry_delay()
    {
        var ctss = new List<CancellationTokenSource>();
        var calls = new List<AsyncServerStreamingCall<TracePathResponse>>();
        try
        {
            for (int i = 0; i < ServerFixture.MaxConcurrentAnalyses; i++)
            {
                var cts = new CancellationTokenSource();
                var call = server.Client.TracePath(LongTrace(), cancellationToken: cts.Token);
                Assert.True(await call.ResponseStream.MoveNext()); // running: it holds a slot
                ctss.Add(cts);
                calls.Add(call);
            }
            using var extra = server.Client.TracePath(LongTrace());
            var ex = await Assert.ThrowsAsync<RpcException>(async () => await extra.ResponseStream.MoveNext());
            Assert.Equal(StatusCode.ResourceExhausted, ex.StatusCode);
            var retry = ex.GetRpcStatus()!.GetDetail<Google.Rpc.RetryInfo>();
            Assert.NotNull(retry);
            Assert.True(retry.RetryDelay.ToTimeSpan() > TimeSpan.Zero);
        }
        finally
        {
            foreach (var c in ctss) c.Cancel();
            foreach (var c in calls) c.Dispose();
            Assert.True(await server.WaitForIdleAsync(TimeSpan.FromSeconds(5)));
        }
    }
}
