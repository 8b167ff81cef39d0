using Grpc.Core;
using PathService.Contracts.V1;
using PathService.Server.Tests.Fixtures;

namespace PathService.Server.Tests;

/// <summary>
/// The critical-point verdict over the wire: multiplicity, additional modes, location note and estimated error of a
/// double bifurcation, and displacement turns at a snap-back, as a client sees them. Closed forms as in the engine's
/// verification tests (docs/theory.md §6.2, §6.4 and §6.6).
/// </summary>
[Collection(ServerCollection.Name)]
public class CriticalPointVerdictWireTests(ServerFixture server)
{
    private static async Task<List<TracePathResponse>> ReadAll(AsyncServerStreamingCall<TracePathResponse> call)
    {
        var all = new List<TracePathResponse>();
        await foreach (var r in call.ResponseStream.ReadAllAsync()) all.Add(r);
        return all;
    }

    [Fact]
    public async Task A_double_bifurcation_arrives_once_with_multiplicity_two_its_second_mode_and_an_honest_error()
    {
        // Post L = 3, EA = 5e4, held at its top by springs k = 40 along x and z, loaded by 10 downward.
        const double L = 3.0, EA = 5.0e4, K = 40.0;
        var m = new StructureModel { Name = "post held by two springs" };
        m.Nodes.Add(new Node { Id = "base" });
        m.Nodes.Add(new Node { Id = "top", Y = L });
        m.Bars.Add(new Bar { Id = "post", StartNode = "base", EndNode = "top", ElasticModulus = 2e8, Area = EA / 2e8 });
        foreach (var d in new[] { Direction.X, Direction.Y, Direction.Z }) m.Supports.Add(new Support { Node = "base", Direction = d });
        m.GroundSprings.Add(new GroundSpring { Id = "sway-x", Node = "top", Direction = Direction.X, Stiffness = K });
        m.GroundSprings.Add(new GroundSpring { Id = "sway-z", Node = "top", Direction = Direction.Z, Stiffness = K });
        var request = new TracePathRequest
        {
            Model = m, LoadCase = new LoadCase { Reference = { new NodalLoad { Node = "top", Fy = -10 } } },
            Controls = new SolverControls { Method = ContinuationMethod.ArcLength, InitialLoadIncrement = 1.0, TargetLoadFactor = 15, MaxPoints = 100 },
        };
        var all = await ReadAll(server.Client.TracePath(request));
        var cp = Assert.Single(all, r => r.UpdateCase == TracePathResponse.UpdateOneofCase.CriticalPoint).CriticalPoint;
        double exact = K * L * Math.Sqrt(1 - 2 * K * L / EA) / 10;
        Assert.Equal(CriticalPointKind.Bifurcation, cp.Kind);
        Assert.Equal(2, cp.Multiplicity);
        Assert.Equal(2, cp.NegativePivotsAfter - cp.NegativePivotsBefore);
        Assert.True(cp.Located);
        Assert.Equal("", cp.LocationNote);
        Assert.True(cp.Tolerance <= 1e-9, $"estimated error {cp.Tolerance}");
        Assert.True(Math.Abs(cp.LoadFactor - exact) <= 1e-10 * exact, $"λ {cp.LoadFactor:R}, closed form {exact:R}");
        var second = Assert.Single(cp.AdditionalModes);
        Assert.Equal(["base", "top"], second.Vectors.Select(v => v.Node));
        Assert.Equal(1.0, second.Vectors.Max(v => Math.Max(Math.Abs(v.X), Math.Max(Math.Abs(v.Y), Math.Abs(v.Z)))), 1e-12);
    }

    [Fact]
    public async Task Past_the_limit_of_located_critical_points_a_step_arrives_unresolved_without_mode_or_state()
    {
        // The post held by two springs (above), traced with detection only: its double crossing is one unresolved entry.
        const double L = 3.0, EA = 5.0e4, K = 40.0;
        var m = new StructureModel { Name = "post held by two springs" };
        m.Nodes.Add(new Node { Id = "base" });
        m.Nodes.Add(new Node { Id = "top", Y = L });
        m.Bars.Add(new Bar { Id = "post", StartNode = "base", EndNode = "top", ElasticModulus = 2e8, Area = EA / 2e8 });
        foreach (var d in new[] { Direction.X, Direction.Y, Direction.Z }) m.Supports.Add(new Support { Node = "base", Direction = d });
        m.GroundSprings.Add(new GroundSpring { Id = "sway-x", Node = "top", Direction = Direction.X, Stiffness = K });
        m.GroundSprings.Add(new GroundSpring { Id = "sway-z", Node = "top", Direction = Direction.Z, Stiffness = K });
        var request = new TracePathRequest
        {
            Model = m, LoadCase = new LoadCase { Reference = { new NodalLoad { Node = "top", Fy = -10 } } },
            Controls = new SolverControls { Method = ContinuationMethod.ArcLength, InitialLoadIncrement = 1.0, TargetLoadFactor = 15, MaxPoints = 100, MaxLocatedCriticalPoints = 0 },
        };
        var all = await ReadAll(server.Client.TracePath(request));
        var cp = Assert.Single(all, r => r.UpdateCase == TracePathResponse.UpdateOneofCase.CriticalPoint).CriticalPoint;
        double exact = K * L * Math.Sqrt(1 - 2 * K * L / EA) / 10;
        Assert.Equal(CriticalPointKind.Unresolved, cp.Kind);
        Assert.False(cp.Located);
        Assert.Equal(2, cp.Multiplicity);
        Assert.Equal(2, cp.NegativePivotsAfter - cp.NegativePivotsBefore);
        Assert.Empty(cp.Mode);
        Assert.Null(cp.State);
        Assert.Contains("max_located_critical_points (0)", cp.LocationNote);
        Assert.Equal(0.5 * (cp.LoadFactorBefore + cp.LoadFactorAfter), cp.LoadFactor);
        Assert.InRange(exact, cp.LoadFactorBefore, cp.LoadFactorAfter);
        var summary = all[^1].Summary;
        Assert.Equal(1, summary.CriticalPoints);
    }

    [Fact]
    public async Task Snap_back_of_the_load_point_arrives_as_two_displacement_turns()
    {
        // The demo truss (EA = 2.4e5, h = 0.35, L0 = √(16 + h²)) loaded through a link spring k_s = 200 at a cap node.
        var m = DemoStructures.TwoBarTruss();
        m.Nodes.Add(new Node { Id = "cap", Y = 1.35 });
        m.Supports.Add(new Support { Node = "cap", Direction = Direction.X });
        m.Supports.Add(new Support { Node = "cap", Direction = Direction.Z });
        m.LinkSprings.Add(new LinkSpring { Id = "feed", StartNode = "apex", EndNode = "cap", Direction = Direction.Y, Stiffness = 200 });
        var cap = new DofRef { Node = "cap", Direction = Direction.Y };
        var request = new TracePathRequest
        {
            Model = m, LoadCase = new LoadCase { Reference = { new NodalLoad { Node = "cap", Fy = -10 } } },
            Controls = new SolverControls
            {
                Method = ContinuationMethod.ArcLength, InitialLoadIncrement = 0.2, MaxPoints = 400, Monitored = { cap },
                TargetDisplacementDof = DemoStructures.ApexY, TargetDisplacement = -0.805,
            },
        };
        var all = await ReadAll(server.Client.TracePath(request));
        var turns = all.Where(r => r.UpdateCase == TracePathResponse.UpdateOneofCase.DisplacementTurn).Select(r => r.DisplacementTurn).ToList();
        Assert.Equal(2, turns.Count);
        double h = 0.35, ea = DemoStructures.E * DemoStructures.Area, l0 = Math.Sqrt(16 + h * h), c = ea / (l0 * l0 * l0);
        double root = Math.Sqrt((h * h - 200 / c) / 3);
        for (int i = 0; i < 2; i++)
        {
            double w = i == 0 ? h - root : h + root, p = c * w * (w - h) * (w - 2 * h);
            Assert.Equal("cap", turns[i].Component.Node);
            Assert.Equal(Direction.Y, turns[i].Component.Direction);
            Assert.Equal(-(w + p / 200), turns[i].Component.Value, 1e-6);
            Assert.Equal(p / 10, turns[i].LoadFactor, 1e-3 * Math.Abs(p / 10));
            Assert.Equal(i + 1, turns[i].Sequence);
        }
    }
}
