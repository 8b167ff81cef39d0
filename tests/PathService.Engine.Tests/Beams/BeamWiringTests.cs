using PathService.Engine.Continuation;
using PathService.Engine.Model;

namespace PathService.Engine.Tests.Beams;

/// <summary>Beams in the engine: unknowns per node, mechanisms named by their rotation, moments in loads and results.</summary>
public class BeamWiringTests
{
    [Fact]
    public void A_node_left_free_to_rotate_is_named_with_its_rotation()
    {
        // The tip joins one beam end that holds torsion but releases both bendings: nothing resists the tip's rotation
        // about global y and z (local y = global y, z = global z for a member along x with orientation +y).
        var def = BeamModels.Cantilever(3.0, 10) with
        {
            Beams = [BeamModels.Cantilever(3.0, 10).Beams[0] with { EndReleases = new(Torsion: false, BendingY: true, BendingZ: true) }],
        };
        var model = StructuralModel.Create(def);
        Assert.True(model.Dofs.Rotates(model.NodeIndex("tip")));
        var ex = Assert.Throws<MechanismException>(() => new PathTracer(model, new SolverControls()).Trace().First());
        Assert.Equal("tip", ex.NodeId);
        Assert.Contains(ex.Direction, new[] { Axis.RotationY, Axis.RotationZ });
        Assert.Contains("rotate about", ex.Message);
    }

    [Fact]
    public void A_rotational_support_removes_that_mechanism()
    {
        var def = BeamModels.Cantilever(3.0, 10) with
        {
            Beams = [BeamModels.Cantilever(3.0, 10).Beams[0] with { EndReleases = new(Torsion: false, BendingY: true, BendingZ: true) }],
            Supports = [.. BeamModels.Fixed("root"), new("tip", Axis.RotationY), new("tip", Axis.RotationZ)],
        };
        var points = new PathTracer(StructuralModel.Create(def), new SolverControls { MaxPoints = 2 }).Trace().OfType<PathPoint>().ToList();
        Assert.Equal(2, points.Count);
    }

    [Fact]
    public void Pinned_beams_between_bar_joints_add_no_rotations()
    {
        var truss = TestModels.TwoBarTruss(4, 0.35, 2.4e5, 10);
        var def = truss with
        {
            Bars = [],
            Beams = truss.Bars.Select(b => new BeamDefinition(b.Id, b.StartNode, b.EndNode, b.ElasticModulus, 0.4 * b.ElasticModulus, b.Area,
                1e-6, 1e-6, 2e-6, (0, 0, 1)) { StartReleases = BeamEndReleases.Pinned, EndReleases = BeamEndReleases.Pinned }).ToList(),
        };
        var model = StructuralModel.Create(def);
        Assert.False(model.Dofs.HasRotations);
        Assert.Equal(9, model.Dofs.FullCount);
    }
}
