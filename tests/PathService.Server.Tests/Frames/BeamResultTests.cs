using PathService.Contracts.V1;
using PathService.Server.Tests.Fixtures;

namespace PathService.Server.Tests.Frames;

/// <summary>
/// Beam results over gRPC keep the contract's promises: rotations and reaction moments only at nodes with rotational
/// unknowns, a monitored rotation equal to the node's rotation vector component, intermediate nodes and elements of a
/// subdivided beam named by the documented ids, and section forces with one sign convention at both ends.
/// </summary>
[Collection(ServerCollection.Name)]
public class BeamResultTests(ServerFixture server)
{
    /// <summary>The portal frame with a subdivided girder and a bar from the left foot to a free node that only the bar
    /// and a link of two springs hold, so one node has no rotational unknowns.</summary>
    private static TracePathRequest Request()
    {
        var (model, loads) = FrameStructures.Portal();
        model.Beams[1].Subdivisions = 3;
        model.Nodes.Add(new Node { Id = "stay", X = -2, Z = 3 });
        model.Bars.Add(new Bar { Id = "tie", StartNode = "stay", EndNode = "head-L", ElasticModulus = 2.1e8, Area = 1e-3 });
        foreach (var d in new[] { Direction.X, Direction.Y, Direction.Z }) model.Supports.Add(new Support { Node = "stay", Direction = d });
        loads.Reference.Add(new NodalLoad { Node = "head-R", Fy = 2, Fz = -20, My = 3 }); // Fy bends the frame out of its plane too
        var headR = new DofRef { Node = "head-R", Direction = Direction.RotationY };
        return new TracePathRequest
        {
            Model = model, LoadCase = loads,
            Controls = new SolverControls { InitialLoadIncrement = 0.5, TargetLoadFactor = 1.0, MaxPoints = 10, FullStateAtEnd = true, Monitored = { headR } },
        };
    }

    [Fact]
    public async Task Rotations_reaction_moments_and_beam_elements_come_back_as_documented()
    {
        var responses = await Requests.ReadAllAsync(server.Client.TracePath(Request()));
        var last = responses.Where(r => r.Point is not null).Select(r => r.Point).Last();
        Assert.NotNull(last.State);
        var nodes = last.State.Nodes.ToDictionary(n => n.Node);
        // Nodes of the request first, then the girder's intermediate nodes.
        Assert.Equal(["foot-L", "head-L", "head-R", "foot-R", "stay", "girder#1", "girder#2"], last.State.Nodes.Select(n => n.Node));
        // A node only a bar reaches has no rotations; a beam's nodes have them, reaction moments at the fixed feet.
        Assert.False(nodes["stay"].HasRotationX || nodes["stay"].HasReactionMomentY);
        Assert.True(nodes["head-R"].HasRotationY && nodes["girder#1"].HasRotationZ);
        Assert.Equal(0, nodes["head-R"].ReactionMomentY);
        Assert.NotEqual(0, nodes["foot-L"].ReactionMomentY);
        Assert.Equal(0, nodes["foot-L"].RotationY);
        // The monitored rotation is the node's rotation vector component.
        Assert.Equal(nodes["head-R"].RotationY, last.Monitored[0].Value);
        Assert.Equal(Direction.RotationY, last.Monitored[0].Direction);
        Assert.NotEqual(0, last.Monitored[0].Value);

        Assert.Equal(["col-L", "girder/1", "girder/2", "girder/3", "col-R"], last.State.BeamElements.Select(e => e.Element));
        Assert.Equal(["col-L", "girder", "girder", "girder", "col-R"], last.State.BeamElements.Select(e => e.Beam));
        foreach (var e in last.State.BeamElements)
        {
            // No load between the joints: N, V and T are the same at both ends (the two ends' actions balance exactly in
            // the element's axes; measured difference 0, the tolerance allows rounding only).
            double scale = 1e-12 * Math.Max(1, Math.Abs(e.Start.AxialForce));
            Assert.Equal(e.Start.AxialForce, e.End.AxialForce, scale);
            Assert.Equal(e.Start.ShearY, e.End.ShearY, scale);
            Assert.Equal(e.Start.ShearZ, e.End.ShearZ, scale);
            Assert.Equal(e.Start.Torsion, e.End.Torsion, scale);
        }
        // The columns are in compression under the girder's load: N < 0 at both ends.
        Assert.True(last.State.BeamElements[4].Start.AxialForce < 0 && last.State.BeamElements[4].End.AxialForce < 0);
        // The sign convention of the moments (a face with outward normal +x): along the element dM_z/dx = −V_y and
        // dM_y/dx = V_z, so over the undivided 3 m column M_end − M_start = −3 V_y and +3 V_z. The corotational element
        // balances its end actions on its current chord, not the initial 3 m, and the relation held to 1.3e-6 of V·L in both planes
        // here; the tolerance is an order above that (a flipped sign would miss by 2 V·L).
        var colL = last.State.BeamElements[0];
        Assert.Equal(-colL.Start.ShearY * 3, colL.End.MomentZ - colL.Start.MomentZ, 2e-5 * Math.Abs(colL.Start.ShearY * 3));
        Assert.Equal(colL.Start.ShearZ * 3, colL.End.MomentY - colL.Start.MomentY, 2e-5 * Math.Abs(colL.Start.ShearZ * 3));
        Assert.NotEqual(0, colL.Start.ShearY * colL.Start.ShearZ); // both planes bend: the check is not vacuous
    }
}
