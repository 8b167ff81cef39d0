using PathService.Engine.Analyses;
using PathService.Engine.Continuation;
using PathService.Engine.Model;

namespace PathService.Engine.Tests.Unit;

/// <summary>A singular starting tangent is reported as a mechanism naming the node and the free direction.</summary>
public class MechanismTests
{
    [Fact]
    public void Apex_left_free_out_of_plane_is_named()
    {
        // The two-bar truss with the apex's z restraint forgotten: nothing resists out-of-plane motion of the apex.
        var def = TestModels.TwoBarTruss(4, 0.35, 2.4e5, 10) with
        {
            Supports = [.. TestModels.Pin("left"), .. TestModels.Pin("right"), new("apex", Axis.X)],
        };
        var model = StructuralModel.Create(def);
        var ex = Assert.Throws<MechanismException>(() => new PathTracer(model, new SolverControls()).Trace().First());
        Assert.Equal("apex", ex.NodeId);
        Assert.Equal(Axis.Z, ex.Direction);
        Assert.Contains("node 'apex'", ex.Message);
        Assert.Contains(" z ", ex.Message);
    }

    [Fact]
    public void A_bar_hanging_from_one_pin_is_a_mechanism_in_linear_analysis_too()
    {
        var def = new ModelDefinition
        {
            Nodes = [new("pin", 0, 0, 0), new("tip", 0, 0, -2)],
            Bars = [new("hanger", "pin", "tip", 2e8, 1e-4)],
            Supports = [.. TestModels.Pin("pin")],
            Loads = LoadCaseDefinition.ReferenceOnly(new NodalLoad("tip", 0, 0, -1)),
        };
        var ex = Assert.Throws<MechanismException>(() => LinearStaticAnalysis.Run(StructuralModel.Create(def)));
        Assert.Equal("tip", ex.NodeId);
        Assert.NotEqual(Axis.Z, ex.Direction);
    }
}
