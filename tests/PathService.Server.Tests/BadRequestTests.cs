using Google.Rpc;
using Grpc.Core;
using PathService.Contracts.V1;
using PathService.Server.Tests.Fixtures;

namespace PathService.Server.Tests;

/// <summary>Each class of bad request gets its own status code and a detail that points at the cause.</summary>
[Collection(ServerCollection.Name)]
public class BadRequestTests(ServerFixture server)
{
    private async Task<RpcException> TraceFails(StructureModel model, LoadCase? loads = null, SolverControls? controls = null)
    {
        using var call = server.Client.TracePath(new TracePathRequest { Model = model, LoadCase = loads ?? DemoStructures.ApexLoad(), Controls = controls });
        return await Assert.ThrowsAsync<RpcException>(async () => { while (await call.ResponseStream.MoveNext()) { } });
    }

    private static BadRequest.Types.FieldViolation Violation(RpcException ex, string field)
    {
        Assert.Equal(StatusCode.InvalidArgument, ex.StatusCode);
        var bad = ex.GetRpcStatus()!.GetDetail<BadRequest>();
        Assert.NotNull(bad);
        return Assert.Single(bad.FieldViolations, v => v.Field == field);
    }

    [Fact]
    public async Task Unknown_node_names_the_bar_and_the_field()
    {
        var model = DemoStructures.TwoBarTruss();
        model.Bars[1].EndNode = "ghost";
        var v = Violation(await TraceFails(model), "model.bars[1].end_node");
        Assert.Contains("bar-R", v.Description);
        Assert.Contains("ghost", v.Description);
    }

    [Fact]
    public async Task Non_positive_area_is_a_field_violation()
    {
        var model = DemoStructures.TwoBarTruss();
        model.Bars[0].Area = 0;
        Assert.Contains("bar-L", Violation(await TraceFails(model), "model.bars[0].area").Description);
    }

    [Fact]
    public async Task NaN_coordinate_is_a_field_violation()
    {
        var model = DemoStructures.TwoBarTruss();
        model.Nodes[1].Y = double.NaN;
        Assert.Contains("apex", Violation(await TraceFails(model), "model.nodes[1].y").Description);
    }

    [Fact]
    public async Task A_negative_limit_of_located_critical_points_is_a_field_violation()
    {
        var v = Violation(await TraceFails(DemoStructures.TwoBarTruss(), controls: new SolverControls { Method = ContinuationMethod.ArcLength, InitialLoadIncrement = 0.5, MaxLocatedCriticalPoints = -3 }),
            "controls.max_located_critical_points");
        Assert.Contains("-3", v.Description);
    }

    [Fact]
    public async Task Missing_reference_load_is_a_field_violation()
    {
        Violation(await TraceFails(DemoStructures.TwoBarTruss(), new LoadCase()), "load_case.reference");
    }

    [Fact]
    public async Task All_findings_come_back_at_once()
    {
        var model = DemoStructures.TwoBarTruss();
        model.Bars[0].Area = -1;
        model.Bars[1].ElasticModulus = 0;
        model.Nodes[0].X = double.PositiveInfinity;
        var bad = (await TraceFails(model)).GetRpcStatus()!.GetDetail<BadRequest>();
        Assert.True(bad.FieldViolations.Count >= 3);
    }

    [Fact]
    public async Task Invalid_controls_name_the_control_field()
    {
        var controls = DemoStructures.ThroughBothLimitPoints();
        controls.ResidualTolerance = 2;
        Violation(await TraceFails(DemoStructures.TwoBarTruss(), controls: controls), "controls.residual_tolerance");
    }

    [Fact]
    public async Task A_mechanism_is_a_failed_precondition_naming_node_and_direction()
    {
        // A single bar from a pinned base: its tip can swing sideways (y or z) without resistance.
        var model = new StructureModel
        {
            Nodes = { new Node { Id = "base" }, new Node { Id = "tip", X = 3 } },
            Bars = { new Bar { Id = "strut", StartNode = "base", EndNode = "tip", ElasticModulus = DemoStructures.E, Area = DemoStructures.Area } },
            Supports = { new Support { Node = "base", Direction = Direction.X }, new Support { Node = "base", Direction = Direction.Y }, new Support { Node = "base", Direction = Direction.Z } },
        };
        var ex = await TraceFails(model, new LoadCase { Reference = { new NodalLoad { Node = "tip", Fx = -10 } } });
        Assert.Equal(StatusCode.FailedPrecondition, ex.StatusCode);
        var info = ex.GetRpcStatus()!.GetDetail<ErrorInfo>();
        Assert.Equal("MECHANISM", info.Reason);
        Assert.Equal("tip", info.Metadata["node"]);
        Assert.Contains(info.Metadata["direction"], new[] { "y", "z" });
        Assert.Contains("tip", ex.Status.Detail);
    }

    [Fact]
    public async Task Too_many_bars_is_resource_exhausted()
    {
        var (model, _, _) = DemoStructures.LatticeCap(41); // 3·41² + 2·41 = 5125 bars > 5000
        Assert.True(model.Bars.Count > ServerFixture.MaxBars);
        var ex = await TraceFails(model);
        Assert.Equal(StatusCode.ResourceExhausted, ex.StatusCode);
        var status = ex.GetRpcStatus()!;
        Assert.Equal("model.bars", Assert.Single(status.GetDetail<BadRequest>().FieldViolations).Field);
        Assert.NotNull(status.GetDetail<QuotaFailure>());
    }

    [Fact]
    public async Task Too_many_points_requested_is_resource_exhausted()
    {
        var controls = DemoStructures.ThroughBothLimitPoints();
        controls.MaxPoints = 1_000_000;
        var ex = await TraceFails(DemoStructures.TwoBarTruss(), controls: controls);
        Assert.Equal(StatusCode.ResourceExhausted, ex.StatusCode);
    }

    [Fact]
    public async Task Unary_calls_use_the_same_codes()
    {
        var model = DemoStructures.TwoBarTruss();
        model.Bars[0].Area = 0;
        var ex = await Assert.ThrowsAsync<RpcException>(async () => await server.Client.AnalyzeLinearAsync(new AnalyzeLinearRequest { Model = model, LoadCase = DemoStructures.ApexLoad() }));
        Assert.Equal("NON_POSITIVE_AREA", Violation(ex, "model.bars[0].area").Reason);
        var modes = await Assert.ThrowsAsync<RpcException>(async () => await server.Client.FindBucklingModesAsync(new FindBucklingModesRequest
        {
            Model = DemoStructures.TwoBarTruss(), LoadCase = DemoStructures.ApexLoad(), ModeCount = 0,
        }));
        Assert.Equal("MODE_COUNT_OUT_OF_RANGE", Violation(modes, "mode_count").Reason);
    }
}
