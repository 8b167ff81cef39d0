using System.Diagnostics;
using Grpc.Core;
using PathService.Contracts.V1;
using PathTracer = PathService.Engine.Continuation.PathTracer;
using StructuralModel = PathService.Engine.Model.StructuralModel;
using PathService.Contracts.Mapping;
using PathService.Server.Tests.Fixtures;
using EnginePoint = PathService.Engine.Continuation.PathPoint;
using EngineCritical = PathService.Engine.Continuation.CriticalPoint;

namespace PathService.Server.Tests;

[Collection(ServerCollection.Name)]
public class TracePathTests(ServerFixture server)
{
    private const double LimitLoadFactor = 6.1180766;

    private static async Task<List<TracePathResponse>> ReadAll(AsyncServerStreamingCall<TracePathResponse> call)
    {
        var all = new List<TracePathResponse>();
        await foreach (var r in call.ResponseStream.ReadAllAsync()) all.Add(r);
        return all;
    }

    [Fact]
    public async Task Streamed_points_equal_the_engines_own_points_exactly()
    {
        var controls = DemoStructures.ThroughBothLimitPoints();
        controls.FullStateEvery = 1;
        var request = new TracePathRequest { Model = DemoStructures.TwoBarTruss(), LoadCase = DemoStructures.ApexLoad(), Controls = controls };
        var streamed = await ReadAll(server.Client.TracePath(request));

        var model = StructuralModel.Create(ModelMapper.ToDefinition(request.Model, request.LoadCase));
        var engine = new PathTracer(model, ControlsMapper.ToControls(controls)).Trace().ToList();

        var enginePoints = engine.OfType<EnginePoint>().ToList();
        var points = streamed.Where(r => r.UpdateCase == TracePathResponse.UpdateOneofCase.Point).Select(r => r.Point).ToList();
        Assert.True(points.Count > 10, $"only {points.Count} points");
        Assert.Equal(enginePoints.Count, points.Count);
        for (int i = 0; i < points.Count; i++)
        {
            Assert.Equal(enginePoints[i].Index, points[i].Index);
            Assert.Equal(enginePoints[i].LoadFactor, points[i].LoadFactor);
            Assert.Equal(enginePoints[i].Monitored[0], points[i].Monitored[0].Value);
            Assert.Equal("apex", points[i].Monitored[0].Node);
            var state = points[i].State;
            Assert.Equal(["left", "apex", "right"], state.Nodes.Select(n => n.Node));
            Assert.Equal(["bar-L", "bar-R"], state.Bars.Select(b => b.Bar));
            for (int n = 0; n < 3; n++)
            {
                Assert.Equal(enginePoints[i].State!.Displacements[3 * n], state.Nodes[n].Ux);
                Assert.Equal(enginePoints[i].State!.Displacements[3 * n + 1], state.Nodes[n].Uy);
                Assert.Equal(enginePoints[i].State!.Displacements[3 * n + 2], state.Nodes[n].Uz);
            }
            Assert.Equal(enginePoints[i].State!.BarForces[0], state.Bars[0].AxialForce);
        }

        // Two limit points at ±λ_lim, in the same order as the engine's, and a summary last.
        var criticals = streamed.Where(r => r.UpdateCase == TracePathResponse.UpdateOneofCase.CriticalPoint).Select(r => r.CriticalPoint).ToList();
        Assert.Equal(engine.OfType<EngineCritical>().Select(c => c.LoadFactor), criticals.Select(c => c.LoadFactor));
        Assert.Equal(2, criticals.Count);
        Assert.All(criticals, c => Assert.Equal(CriticalPointKind.LimitPoint, c.Kind));
        Assert.Equal(LimitLoadFactor, criticals[0].LoadFactor, 1e-5);
        Assert.Equal(-LimitLoadFactor, criticals[1].LoadFactor, 1e-5);
        Assert.Equal(["left", "apex", "right"], criticals[0].Mode.Select(v => v.Node));

        var summary = Assert.Single(streamed, r => r.UpdateCase == TracePathResponse.UpdateOneofCase.Summary).Summary;
        Assert.Equal(TracePathResponse.UpdateOneofCase.Summary, streamed[^1].UpdateCase);
        Assert.Equal(Contracts.V1.StopReason.TargetDisplacementReached, summary.Reason);
        Assert.True(summary.Completed);
        Assert.Equal(points.Count, summary.Points);
        Assert.Equal("kN", summary.Units.Force);
        Assert.Equal("m", summary.Units.Length);
    }

    [Fact]
    public async Task Full_state_comes_only_where_requested()
    {
        var controls = DemoStructures.ThroughBothLimitPoints();
        controls.FullStateEvery = 5;
        var streamed = await ReadAll(server.Client.TracePath(new TracePathRequest
        {
            Model = DemoStructures.TwoBarTruss(), LoadCase = DemoStructures.ApexLoad(), Controls = controls,
        }));
        var points = streamed.Where(r => r.Point is not null).Select(r => r.Point).ToList();
        foreach (var p in points.Take(points.Count - 1))
            Assert.Equal(p.Index % 5 == 0, p.State is not null);
        Assert.NotNull(points[^1].State); // full_state_at_end defaults to true
        Assert.All(streamed.Where(r => r.CriticalPoint is not null), r => Assert.NotNull(r.CriticalPoint.State));
    }

    [Fact]
    public async Task The_first_point_reaches_the_client_while_the_analysis_is_still_running()
    {
        // 300 small steps of a 120-bar cap, each point with its full state: far more output than the channel and the
        // HTTP/2 windows hold, so the analysis cannot finish before the client reads on.
        var (model, loads, crown) = DemoStructures.LatticeCap(6);
        var request = new TracePathRequest
        {
            Model = model, LoadCase = loads,
            Controls = new SolverControls { InitialLoadIncrement = 0.02, MaxIncrementRatio = 1, MaxPoints = 300, FullStateEvery = 1, Monitored = { crown } },
        };
        var clock = Stopwatch.StartNew();
        using var call = server.Client.TracePath(request);
        Assert.True(await call.ResponseStream.MoveNext());
        var firstAt = clock.Elapsed;
        Assert.Equal(0, call.ResponseStream.Current.Point.Index);
        int activeAtFirstPoint = server.Gate.Active;

        var rest = new List<TracePathResponse>();
        while (await call.ResponseStream.MoveNext()) rest.Add(call.ResponseStream.Current);
        var summary = rest[^1].Summary;
        Assert.NotNull(summary);
        Assert.Equal(1, activeAtFirstPoint);
        Assert.True(firstAt < summary.WallTime.ToTimeSpan(),
            $"first point after {firstAt.TotalMilliseconds} ms, but the whole trace took {summary.WallTime.ToTimeSpan().TotalMilliseconds} ms on the server");
        Assert.Equal(300, summary.Points);
    }

    [Fact]
    public async Task A_diverging_load_control_trace_ends_with_a_summary_not_an_error()
    {
        var streamed = await ReadAll(server.Client.TracePath(new TracePathRequest
        {
            Model = DemoStructures.TwoBarTruss(), LoadCase = DemoStructures.ApexLoad(),
            Controls = new SolverControls { Method = ContinuationMethod.LoadControl, InitialLoadIncrement = 0.25, TargetLoadFactor = 10 },
        }));
        Assert.Contains(streamed, r => r.StepCut is not null);
        Assert.Equal(Contracts.V1.StopReason.Diverged, streamed[^1].Summary.Reason);
        Assert.False(streamed[^1].Summary.Completed);
    }

    [Fact]
    public async Task Responses_carry_a_request_id_header()
    {
        using var call = server.Client.TracePath(new TracePathRequest
        {
            Model = DemoStructures.TwoBarTruss(), LoadCase = DemoStructures.ApexLoad(), Controls = DemoStructures.ThroughBothLimitPoints(),
        }, new Metadata { { "x-request-id", "test-call-42" } });
        var headers = await call.ResponseHeadersAsync;
        Assert.Equal("test-call-42", headers.GetValue("x-request-id"));
        await foreach (var _ in call.ResponseStream.ReadAllAsync()) { }

        using var other = server.Client.TracePath(new TracePathRequest { Model = DemoStructures.TwoBarTruss(), LoadCase = DemoStructures.ApexLoad() });
        Assert.False(string.IsNullOrEmpty((await other.ResponseHeadersAsync).GetValue("x-request-id")));
        await foreach (var _ in other.ResponseStream.ReadAllAsync()) { }
    }
}
