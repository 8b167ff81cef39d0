using Google.Rpc;
using Grpc.Core;
using PathService.Contracts.V1;
using PathService.Server.Tests.Fixtures;
using StatusCode = Grpc.Core.StatusCode;

namespace PathService.Server.Tests;

/// <summary>Faults of the input found by the engine while computing are refusals naming the field, never INTERNAL; enum errors quote the number sent.</summary>
[Collection(ServerCollection.Name)]
public sealed class InputFaultTests(ServerFixture server)
{
    /// <summary>The two-bar truss with its reference load on a support: it stresses nothing, so there is no buckling mode to shape an imperfection.</summary>
    private static TracePathRequest UnstressedWithModeImperfection()
    {
        var request = Requests.Truss();
        request.LoadCase = new LoadCase { Reference = { new NodalLoad { Node = "left", Fy = -10 } } };
        request.Imperfection = new Imperfection { BucklingModes = { 1 }, Amplitude = 0.01 };
        return request;
    }

    [Fact]
    public async Task A_mode_imperfection_without_geometric_stiffness_is_a_failed_precondition_naming_the_field()
    {
        var ex = await Assert.ThrowsAsync<RpcException>(() => Requests.ReadAllAsync(server.Client.TracePath(UnstressedWithModeImperfection())));
        Assert.Equal(StatusCode.FailedPrecondition, ex.StatusCode);
        var status = ex.GetRpcStatus()!;
        var info = status.GetDetail<ErrorInfo>()!;
        Assert.Equal("NO_GEOMETRIC_STIFFNESS", info.Reason);
        Assert.Equal("imperfection.buckling_modes", info.Metadata["field"]);
        Assert.Equal("imperfection.buckling_modes", status.GetDetail<BadRequest>()!.FieldViolations[0].Field);
        Assert.Contains("geometric stiffness", ex.Status.Detail);
    }

    [Fact]
    public async Task Buckling_of_a_structure_its_reference_load_does_not_stress_is_a_failed_precondition()
    {
        var request = UnstressedWithModeImperfection();
        var ex = await Assert.ThrowsAsync<RpcException>(() => server.Client.FindBucklingModesAsync(
            new FindBucklingModesRequest { Model = request.Model, LoadCase = request.LoadCase, ModeCount = 1 }).ResponseAsync);
        Assert.Equal(StatusCode.FailedPrecondition, ex.StatusCode);
        Assert.Contains("geometric stiffness", ex.Status.Detail);
    }

    /// <summary>The slider on a spring with a pretensioned compression-only strut (engine OneSidedBracingTests): no consistent slack set.</summary>
    [Fact]
    public async Task A_linear_analysis_whose_slack_set_cannot_settle_is_a_failed_precondition_naming_the_strut()
    {
        var model = new StructureModel { Name = "strut that cannot settle" };
        model.Nodes.Add(new Node { Id = "anchor", X = -1 });
        model.Nodes.Add(new Node { Id = "slider" });
        model.Bars.Add(new Bar { Id = "strut", StartNode = "anchor", EndNode = "slider", ElasticModulus = 1e4, Area = 1e-2, InitialStress = 1e3, Behavior = BarBehavior.CompressionOnly });
        model.GroundSprings.Add(new GroundSpring { Id = "guide", Node = "slider", Direction = Direction.X, Stiffness = 1 });
        foreach (var d in new[] { Direction.X, Direction.Y, Direction.Z }) model.Supports.Add(new Support { Node = "anchor", Direction = d });
        model.Supports.Add(new Support { Node = "slider", Direction = Direction.Y });
        model.Supports.Add(new Support { Node = "slider", Direction = Direction.Z });
        var request = new AnalyzeLinearRequest { Model = model, LoadCase = new LoadCase { Reference = { new NodalLoad { Node = "slider", Fx = -0.5 } } } };
        var ex = await Assert.ThrowsAsync<RpcException>(() => server.Client.AnalyzeLinearAsync(request).ResponseAsync);
        Assert.Equal(StatusCode.FailedPrecondition, ex.StatusCode);
        Assert.Equal("ACTIVE_SET_CYCLING", ex.GetRpcStatus()!.GetDetail<ErrorInfo>()!.Reason);
        Assert.Contains("'strut'", ex.Status.Detail);
    }

    [Fact]
    public async Task An_unknown_direction_number_is_quoted_as_sent()
    {
        var request = Requests.Truss();
        request.Model.Supports[0].Direction = (Direction)99;
        var ex = await Assert.ThrowsAsync<RpcException>(() => Requests.ReadAllAsync(server.Client.TracePath(request)));
        Assert.Equal(StatusCode.InvalidArgument, ex.StatusCode);
        var violation = ex.GetRpcStatus()!.GetDetail<BadRequest>()!.FieldViolations.Single(v => v.Field == "model.supports[0].direction");
        Assert.Contains("direction 99 ", violation.Description);
        Assert.DoesNotContain("-1", violation.Description);
    }

    [Fact]
    public async Task Unknown_method_constraint_and_behavior_numbers_are_quoted_as_sent()
    {
        var request = Requests.Truss();
        request.Controls.Method = (ContinuationMethod)99;
        request.Controls.Constraint = (ArcLengthConstraint)77;
        request.Model.Bars[0].Behavior = (BarBehavior)55;
        var ex = await Assert.ThrowsAsync<RpcException>(() => Requests.ReadAllAsync(server.Client.TracePath(request)));
        Assert.Equal(StatusCode.InvalidArgument, ex.StatusCode);
        var model = await server.Client.CheckModelAsync(new CheckModelRequest { Model = request.Model, LoadCase = request.LoadCase });
        Assert.Contains(model.Findings, f => f.Field == "model.bars[0].behavior" && f.Message.Contains("behavior 55", StringComparison.Ordinal));
        // Controls are checked once the model is valid.
        var controls = await server.Client.CheckModelAsync(new CheckModelRequest { Model = Requests.Truss().Model, LoadCase = request.LoadCase, Controls = request.Controls });
        Assert.Contains(controls.Findings, f => f.Field == "controls.method" && f.Message.Contains("continuation method 99", StringComparison.Ordinal));
        Assert.Contains(controls.Findings, f => f.Field == "controls.constraint" && f.Message.Contains("arc-length constraint 77", StringComparison.Ordinal));
    }

    [Fact]
    public async Task An_unset_direction_says_it_is_not_set()
    {
        var request = Requests.Truss();
        request.Model.Supports[0].Direction = Direction.Unspecified;
        var ex = await Assert.ThrowsAsync<RpcException>(() => Requests.ReadAllAsync(server.Client.TracePath(request)));
        var violation = ex.GetRpcStatus()!.GetDetail<BadRequest>()!.FieldViolations.Single(v => v.Field == "model.supports[0].direction");
        Assert.Contains("not set", violation.Description);
    }

    [Fact]
    public async Task An_imperfection_shape_of_zeros_is_a_failed_precondition_not_internal()
    {
        var request = Requests.Truss();
        request.Imperfection = new Imperfection { Shape = { new ShapeVector { Node = "apex" } }, Amplitude = 0.01 };
        var ex = await Assert.ThrowsAsync<RpcException>(() => Requests.ReadAllAsync(server.Client.TracePath(request)));
        Assert.Equal(StatusCode.FailedPrecondition, ex.StatusCode);
        var info = ex.GetRpcStatus()!.GetDetail<ErrorInfo>()!;
        Assert.Equal("ZERO_IMPERFECTION_SHAPE", info.Reason);
        Assert.Equal("imperfection", info.Metadata["field"]);
    }
}
