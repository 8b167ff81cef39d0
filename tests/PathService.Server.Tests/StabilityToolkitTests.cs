using Google.Rpc;
using Grpc.Core;
using PathService.Contracts.V1;
using PathService.Server.Tests.Fixtures;

namespace PathService.Server.Tests;

/// <summary>The stability toolkit over the wire: knock-down sweeps, branch switching and member events.</summary>
[Collection(ServerCollection.Name)]
public class StabilityToolkitTests(ServerFixture server)
{
    /// <summary>Vertical post pinned at its base, top held by a lateral spring (see the engine's verification tests).</summary>
    private static (StructureModel, LoadCase) SpringHeldPost()
    {
        var model = new StructureModel
        {
            Name = "spring-held post",
            Nodes = { new Node { Id = "base" }, new Node { Id = "top", Y = 3.0 } },
            Bars = { new Bar { Id = "post", StartNode = "base", EndNode = "top", ElasticModulus = 2e8, Area = 2.5e-4 } },
            GroundSprings = { new GroundSpring { Id = "lateral", Node = "top", Direction = Direction.X, Stiffness = 40 } },
            Supports =
            {
                new Support { Node = "base", Direction = Direction.X }, new Support { Node = "base", Direction = Direction.Y },
                new Support { Node = "base", Direction = Direction.Z }, new Support { Node = "top", Direction = Direction.Z },
            },
        };
        return (model, new LoadCase { Reference = { new NodalLoad { Node = "top", Fy = -10 } } });
    }

    [Fact]
    public async Task Sweep_streams_the_perfect_reference_then_a_falling_knock_down_curve()
    {
        var (model, loads) = SpringHeldPost();
        var client = new ImperfectionSweepService.ImperfectionSweepServiceClient(server.Channel);
        var request = new SweepImperfectionsRequest
        {
            Model = model, LoadCase = loads,
            Controls = new SolverControls { InitialLoadIncrement = 1.0, MaxPoints = 400, ResidualTolerance = 1e-12 },
            Imperfection = new Imperfection { BucklingModes = { 1 }, AmplitudeUnit = AmplitudeUnit.SpanFraction, DeclaredSpan = 3.0 },
            Amplitudes = { 1e-4, 1e-3, 1e-2 },
        };
        using var call = client.SweepImperfections(request);
        var updates = new List<SweepImperfectionsResponse>();
        await foreach (var u in call.ResponseStream.ReadAllAsync()) updates.Add(u);

        Assert.Equal(SweepImperfectionsResponse.UpdateOneofCase.Reference, updates[0].UpdateCase);
        Assert.Equal(CriticalPointKind.Bifurcation, updates[0].Reference.Kind);
        // kL·√(1 − 2kL/EA) / P_ref for k = 40, L = 3, EA = 5e4, P_ref = 10 (engine verification, docs/theory.md §6.2 (from memory)).
        double perfect = 40 * 3 * Math.Sqrt(1 - 2 * 40 * 3 / 5e4) / 10;
        Assert.Equal(perfect, updates[0].Reference.CriticalLoadFactor, 1e-6 * perfect);
        var results = updates.Skip(1).Select(u => u.Result).ToList();
        Assert.Equal([0, 1, 2], results.Select(r => r.Index));
        Assert.Equal(3e-4, results[0].Amplitude, 1e-15);
        Assert.All(results, r => Assert.Equal(CriticalPointKind.LimitPoint, r.Kind));
        Assert.True(results[0].KnockDown > results[1].KnockDown && results[1].KnockDown > results[2].KnockDown);
        Assert.True(results[0].KnockDown > 0.99);
    }

    [Fact]
    public async Task Sweep_without_amplitudes_is_an_invalid_argument()
    {
        var (model, loads) = SpringHeldPost();
        var client = new ImperfectionSweepService.ImperfectionSweepServiceClient(server.Channel);
        using var call = client.SweepImperfections(new SweepImperfectionsRequest { Model = model, LoadCase = loads, Imperfection = new Imperfection { BucklingModes = { 1 } } });
        var ex = await Assert.ThrowsAsync<RpcException>(async () => { await foreach (var _ in call.ResponseStream.ReadAllAsync()) { } });
        Assert.Equal(StatusCode.InvalidArgument, ex.StatusCode);
        Assert.Contains("amplitude", ex.Status.Detail);
    }

    [Fact]
    public async Task Branch_switching_and_member_events_arrive_in_the_stream()
    {
        var (model, loads) = SpringHeldPost();
        model.Bars[0].SecondMoment = 1.0e-8; // Euler load π²EI/L² ≈ 2.19 kN, reached on the way up
        var request = new TracePathRequest
        {
            Model = model, LoadCase = loads,
            Controls = new SolverControls
            {
                InitialLoadIncrement = 0.05, TargetLoadFactor = 13, MaxPoints = 300, SwitchBranches = true, SecondaryBranchPoints = 5,
                Monitored = { new DofRef { Node = "top", Direction = Direction.X } },
            },
        };
        using var call = server.Client.TracePath(request);
        var updates = new List<TracePathResponse>();
        await foreach (var u in call.ResponseStream.ReadAllAsync()) updates.Add(u);
        // Each branch reports its own member events; the primary path reports the strut once.
        var buckle = Assert.Single(updates, u => u.UpdateCase == TracePathResponse.UpdateOneofCase.MemberEvent && u.MemberEvent.Branch == 0).MemberEvent;
        Assert.Equal(MemberEventKind.Buckle, buckle.Kind);
        Assert.Equal("post", buckle.Bar);
        double euler = Math.PI * Math.PI * 2e8 * 1e-8 / 9.0;
        Assert.Equal(euler / 10, buckle.OnsetLoadFactor, 1e-3 * euler / 10);
        Assert.Single(updates, u => u.UpdateCase == TracePathResponse.UpdateOneofCase.BranchStarted);
        Assert.Single(updates, u => u.UpdateCase == TracePathResponse.UpdateOneofCase.BranchEnded);
        Assert.Equal(5, updates.Count(u => u.UpdateCase == TracePathResponse.UpdateOneofCase.Point && u.Point.Branch == 1));
        Assert.Equal(2, updates[^1].Summary.Branches);
    }
}

/// <summary>Bad imperfections and sweep amplitudes are refused with the field at fault.</summary>
[Collection(ServerCollection.Name)]
public class ImperfectionInputTests(ServerFixture server)
{
    private static TracePathRequest Truss(Imperfection imperfection) => new()
    {
        Model = DemoStructures.TwoBarTruss(), LoadCase = DemoStructures.ApexLoad(), Imperfection = imperfection,
        Controls = new SolverControls { MaxPoints = 5 },
    };

    private async Task<RpcException> TraceFails(TracePathRequest request)
    {
        using var call = server.Client.TracePath(request);
        return await Assert.ThrowsAsync<RpcException>(async () => { await foreach (var _ in call.ResponseStream.ReadAllAsync()) { } });
    }

    private static string Fields(RpcException ex) =>
        string.Join(" ", ex.GetRpcStatus()?.GetDetail<BadRequest>()?.FieldViolations.Select(v => v.Field) ?? []);

    [Fact]
    public async Task A_shape_naming_an_unknown_node_is_an_invalid_argument()
    {
        var ex = await TraceFails(Truss(new Imperfection { Shape = { new ShapeVector { Node = "ghost", Y = 1 } }, Amplitude = 0.01 }));
        Assert.Equal(StatusCode.InvalidArgument, ex.StatusCode);
        Assert.Contains("imperfection.shape[0].node", Fields(ex));
        Assert.Contains("ghost", ex.Status.Detail);
    }

    [Fact]
    public async Task A_mode_number_out_of_range_is_an_invalid_argument()
    {
        var ex = await TraceFails(Truss(new Imperfection { BucklingModes = { 0 }, Amplitude = 0.01 }));
        Assert.Equal(StatusCode.InvalidArgument, ex.StatusCode);
        Assert.Contains("imperfection.buckling_modes[0]", Fields(ex));
    }

    [Fact]
    public async Task A_non_finite_amplitude_is_an_invalid_argument()
    {
        var ex = await TraceFails(Truss(new Imperfection { BucklingModes = { 1 }, Amplitude = double.NaN }));
        Assert.Equal(StatusCode.InvalidArgument, ex.StatusCode);
        Assert.Contains("imperfection.amplitude", Fields(ex));
    }

    private static string Reason(RpcException ex, string field) =>
        ex.GetRpcStatus()!.GetDetail<BadRequest>()!.FieldViolations.Single(v => v.Field == field).Reason;

    [Fact]
    public async Task Each_imperfection_fault_carries_its_own_reason()
    {
        var modeOut = await TraceFails(Truss(new Imperfection { BucklingModes = { 21 }, Amplitude = 0.01 }));
        Assert.Equal("IMPERFECTION_MODE_OUT_OF_RANGE", Reason(modeOut, "imperfection.buckling_modes[0]"));
        var noShape = await TraceFails(Truss(new Imperfection { Amplitude = 0.01 }));
        Assert.Equal("IMPERFECTION_SHAPE_MISSING", Reason(noShape, "imperfection"));
        var weights = await TraceFails(Truss(new Imperfection { BucklingModes = { 1 }, Weights = { 1, 2 }, Amplitude = 0.01 }));
        Assert.Equal("IMPERFECTION_WEIGHTS_MISMATCH", Reason(weights, "imperfection.weights"));
        var nonFinite = await TraceFails(Truss(new Imperfection { Shape = { new ShapeVector { Node = "apex", Y = double.NaN } }, Amplitude = 0.01 }));
        Assert.Equal("NON_FINITE_NUMBER", Reason(nonFinite, "imperfection.shape[0]"));
        var huge = await TraceFails(Truss(new Imperfection { BucklingModes = { 1 }, Amplitude = 1e16 }));
        Assert.Equal("MAGNITUDE_BEYOND_LIMIT", Reason(huge, "imperfection.amplitude"));
    }

    [Fact]
    public async Task Control_faults_carry_their_kind_as_the_reason()
    {
        var request = Truss(new Imperfection { BucklingModes = { 1 }, Amplitude = 0.01 });
        request.Imperfection = null;
        request.Controls = new SolverControls
        {
            Method = ContinuationMethod.DisplacementControl, InitialDisplacementIncrement = 0, MaxPoints = 5,
            SwitchBranches = true, SingularPivotRatio = 0.5,
        };
        var ex = await TraceFails(request);
        Assert.Equal(StatusCode.InvalidArgument, ex.StatusCode);
        Assert.Equal("CONTROL_MISSING", Reason(ex, "controls.control_dof"));
        Assert.Equal("CONTROL_OUT_OF_RANGE", Reason(ex, "controls.initial_displacement_increment"));
        Assert.Equal("CONTROL_OUT_OF_RANGE", Reason(ex, "controls.singular_pivot_ratio"));
        Assert.Equal("CONTROL_CONFLICT", Reason(ex, "controls.switch_branches"));
    }

    [Fact]
    public async Task A_non_finite_sweep_amplitude_names_its_position()
    {
        var client = new ImperfectionSweepService.ImperfectionSweepServiceClient(server.Channel);
        using var call = client.SweepImperfections(new SweepImperfectionsRequest
        {
            Model = DemoStructures.TwoBarTruss(), LoadCase = DemoStructures.ApexLoad(),
            Imperfection = new Imperfection { BucklingModes = { 1 } }, Amplitudes = { 0.001, double.PositiveInfinity },
        });
        var ex = await Assert.ThrowsAsync<RpcException>(async () => { await foreach (var _ in call.ResponseStream.ReadAllAsync()) { } });
        Assert.Equal(StatusCode.InvalidArgument, ex.StatusCode);
        Assert.Contains("amplitudes[1]", Fields(ex));
    }
}
