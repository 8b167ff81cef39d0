using System.Diagnostics;
using Google.Rpc;
using Grpc.Core;
using PathService.Application;
using PathService.Application.Errors;
using PathService.Application.Validation;
using PathService.Contracts.Mapping;
using PathService.Contracts.V1;
using PathService.Engine.Model;
using PathService.Server.Limits;
using PathService.Server.Tests.Fixtures;
using StatusCode = Grpc.Core.StatusCode;

namespace PathService.Server.Tests;

/// <summary>One test per limit; every refusal happens before the analysis starts and says which limit.</summary>
[Collection(ServerCollection.Name)]
public sealed class LimitsTests : IAsyncLifetime
{
    private TestServer _server = null!;

    public async Task InitializeAsync() => _server = await TestServer.StartAsync(
    [
        "Limits:MaxNodes=60", "Limits:MaxBars=200", "Limits:MaxPoints=50", "Limits:MaxRequestBytes=16384",
        "Limits:MaxTraceSeconds=0.3", "Limits:MaxAnalysisMemoryMiB=64",
    ]);

    public async Task DisposeAsync() => await _server.DisposeAsync();

    private static void AssertQuota(RpcException ex, string subject)
    {
        Assert.Equal(StatusCode.ResourceExhausted, ex.StatusCode);
        var quota = ex.GetRpcStatus()!.GetDetail<QuotaFailure>();
        Assert.NotNull(quota);
        Assert.Equal(subject, quota.Violations[0].Subject);
    }

    [Fact]
    public async Task A_request_above_the_byte_limit_is_refused()
    {
        var request = Requests.Truss();
        request.Model.Name = new string('x', 20_000);
        var ex = await Assert.ThrowsAsync<RpcException>(() => Requests.ReadAllAsync(_server.Client.TracePath(request)));
        Assert.Equal(StatusCode.ResourceExhausted, ex.StatusCode);
        Assert.Contains("16384", ex.Status.Detail);
    }

    [Fact]
    public async Task A_model_above_the_node_limit_is_refused()
    {
        var (model, loads, _) = DemoStructures.LatticeCap(8); // 81 nodes
        var ex = await Assert.ThrowsAsync<RpcException>(() => Requests.ReadAllAsync(_server.Client.TracePath(new TracePathRequest { Model = model, LoadCase = loads })));
        AssertQuota(ex, "model.nodes");
    }

    [Fact]
    public async Task A_model_above_the_bar_limit_is_refused()
    {
        var request = Requests.Truss();
        for (int i = 0; i < 200; i++) request.Model.Bars.Add(request.Model.Bars[0].Clone());
        var ex = await Assert.ThrowsAsync<RpcException>(() => _server.Client.AnalyzeLinearAsync(new AnalyzeLinearRequest { Model = request.Model, LoadCase = request.LoadCase }).ResponseAsync);
        AssertQuota(ex, "model.bars");
    }

    [Fact]
    public void Springs_have_a_limit_of_their_own_and_do_not_count_against_bars()
    {
        var limits = new RequestLimits(Microsoft.Extensions.Options.Options.Create(new PathService.Server.Configuration.PathServiceOptions
        {
            Limits = { MaxBars = 1, MaxSprings = 3 },
        }));
        var analyses = new AnalysisApplication(limits.Analysis);
        var model = new StructureModel { Bars = { new Bar() } };
        for (int i = 0; i < 2; i++) model.GroundSprings.Add(new GroundSpring());
        model.LinkSprings.Add(new LinkSpring());
        analyses.CheckModelSize(model); // three springs beside one bar: within MaxSprings, whatever MaxBars is
        model.LinkSprings.Add(new LinkSpring());
        var ex = PathService.Server.Errors.RpcErrors.From(Assert.Throws<AnalysisRefusedException>(() => analyses.CheckModelSize(model)));
        AssertQuota(ex, "model.springs");
        Assert.Contains("4 springs (2 ground springs, 2 link springs)", ex.Status.Detail);
        Assert.Contains("at most 3 springs", ex.Status.Detail);
    }

    [Fact]
    public async Task More_points_than_the_limit_are_refused()
    {
        var request = Requests.Truss();
        request.Controls.MaxPoints = 51;
        var ex = await Assert.ThrowsAsync<RpcException>(() => Requests.ReadAllAsync(_server.Client.TracePath(request)));
        AssertQuota(ex, "controls.max_points");
    }

    [Fact]
    public async Task The_wall_time_limit_ends_a_long_trace()
    {
        var request = Requests.LongTrace();
        request.Controls.MaxPoints = 50;
        request.Controls.InitialLoadIncrement = 1e-5;
        request.Controls.MaxIncrementRatio = 1;
        var clock = Stopwatch.StartNew();
        var messages = await Requests.ReadAllAsync(_server.Client.TracePath(request));
        var summary = messages[^1].Summary;
        Assert.NotNull(summary);
        Assert.True(summary.Reason is Contracts.V1.StopReason.WallTimeExceeded or Contracts.V1.StopReason.PointLimitReached, summary.Reason.ToString());
        Assert.True(clock.Elapsed < TimeSpan.FromSeconds(5), $"the trace ran {clock.Elapsed}");
        Assert.True(summary.WallTime.ToTimeSpan() < TimeSpan.FromSeconds(1.5));
    }

    [Fact]
    public async Task The_queue_holds_a_bounded_number_of_callers_for_a_bounded_time()
    {
        await using var server = await TestServer.StartAsync(["Limits:MaxConcurrentAnalyses=1", "Limits:MaxQueuedAnalyses=1", "Limits:QueueTimeoutSeconds=1.5"]);
        using var holder = new CancellationTokenSource();
        using var running = server.Client.TracePath(Requests.LongTrace(), cancellationToken: holder.Token);
        Assert.True(await running.ResponseStream.MoveNext()); // holds the only slot
        try
        {
            // 1. A waiting caller gives up after the queue timeout, with a retry delay.
            var clock = Stopwatch.StartNew();
            var ex = await Assert.ThrowsAsync<RpcException>(() => Requests.ReadAllAsync(server.Client.TracePath(Requests.Truss())));
            AssertQuota(ex, "analysis_queue");
            Assert.True(ex.GetRpcStatus()!.GetDetail<RetryInfo>()!.RetryDelay.ToTimeSpan() > TimeSpan.Zero);
            Assert.InRange(clock.Elapsed.TotalSeconds, 1.4, 10);

            // 2. With the queue full, the next caller is turned away at once.
            var queued = Requests.ReadAllAsync(server.Client.TracePath(Requests.Truss()));
            var until = DateTime.UtcNow.AddSeconds(5);
            while (server.Gate.Queued == 0 && DateTime.UtcNow < until) await Task.Delay(5);
            Assert.Equal(1, server.Gate.Queued);
            clock.Restart();
            var full = await Assert.ThrowsAsync<RpcException>(() => server.Client.AnalyzeLinearAsync(new AnalyzeLinearRequest { Model = DemoStructures.TwoBarTruss(), LoadCase = DemoStructures.ApexLoad() }).ResponseAsync);
            Assert.Equal(StatusCode.ResourceExhausted, full.StatusCode);
            Assert.NotNull(full.GetRpcStatus()!.GetDetail<RetryInfo>());
            Assert.True(clock.Elapsed < TimeSpan.FromSeconds(1), "a caller beyond the queue waited");

            // 3. When the slot frees, the queued caller runs.
            holder.Cancel();
            var messages = await queued;
            Assert.NotNull(messages[^1].Summary);
        }
        finally
        {
            holder.Cancel();
            Assert.True(await server.WaitForIdleAsync(TimeSpan.FromSeconds(5)));
        }
    }

    [Fact]
    public async Task An_analysis_above_the_memory_budget_is_refused_before_factorising()
    {
        await using var small = await TestServer.StartAsync(["Limits:MaxAnalysisMemoryMiB=9"]);
        // The truss fits; a 30×30 cap (2,760 bars, ~2,500 free DOFs) does not.
        var ok = await Requests.ReadAllAsync(small.Client.TracePath(Requests.Truss()));
        Assert.NotNull(ok[^1].Summary);
        var (model, loads, _) = DemoStructures.LatticeCap(30);
        var ex = await Assert.ThrowsAsync<RpcException>(() => Requests.ReadAllAsync(small.Client.TracePath(new TracePathRequest { Model = model, LoadCase = loads })));
        AssertQuota(ex, "analysis_memory");
        Assert.Contains("MiB", ex.Status.Detail);
    }

    [Fact]
    public void The_memory_estimate_uses_the_symbolic_factor_size_when_the_cheap_bound_is_too_high()
    {
        var (model, loads, _) = DemoStructures.LatticeCap(30);
        var structure = StructuralModel.Create(ModelMapper.ToDefinition(model, loads));
        long n = structure.Dofs.FreeCount;
        var cheap = AnalysisMemory.Of(structure, budgetBytes: long.MaxValue);
        Assert.False(cheap.Exact);
        Assert.Equal(n * (n + 1) / 2, cheap.FactorEntries);
        var exact = AnalysisMemory.Of(structure, budgetBytes: 1);
        Assert.True(exact.Exact);
        Assert.InRange(exact.FactorEntries, n, cheap.FactorEntries / 5);
        Assert.True(exact.Bytes < cheap.Bytes);
    }
}
