using PathService.Engine.Analyses;
using PathService.Engine.Model;

namespace PathService.Engine.Tests.Verification;

/// <summary>
/// A statically determinate plane truss (our own: span 8 m, height 3 m, two panels) whose member forces follow from the
/// method of joints (e.g. R. C. Hibbeler, "Structural Analysis", ch. 3 (from memory)): A(0,0) pinned, C(8,0) on a roller, B(4,0) carries
/// 60 kN down, D(2,3) carries 10 kN along +x; E(6,3). Reactions: C_y = (60·4 + 10·3)/8 = 33.75, A_y = 26.25, A_x = −10.
/// Joint A: N_AD = −26.25·√13/3, N_AB = 10 + 2·8.75 = 27.5. Joint C: N_CE = −11.25√13, N_BC = 22.5.
/// Joint D: N_BD = 8.75√13, N_DE = −10 − 35 = −45. Joint E: N_BE = 11.25√13. (Tension positive; joint B closes.)
/// </summary>
public class MethodOfJointsTests
{
    private static ModelDefinition Truss()
    {
        const double E = 2.1e8, A = 2.0e-3;
        string[] ids = ["A", "B", "C", "D", "E"];
        return new ModelDefinition
        {
            Name = "two-panel plane truss",
            Nodes = [new("A", 0, 0, 0), new("B", 4, 0, 0), new("C", 8, 0, 0), new("D", 2, 3, 0), new("E", 6, 3, 0)],
            Bars = [new("AB", "A", "B", E, A), new("BC", "B", "C", E, A), new("AD", "A", "D", E, A), new("BD", "B", "D", E, A),
                    new("BE", "B", "E", E, A), new("CE", "C", "E", E, A), new("DE", "D", "E", E, A)],
            Supports = [new("A", Axis.X), new("A", Axis.Y), new("C", Axis.Y), .. ids.Select(n => new SupportDefinition(n, Axis.Z))],
            Loads = LoadCaseDefinition.ReferenceOnly(new NodalLoad("B", 0, -60, 0), new NodalLoad("D", 10, 0, 0)),
        };
    }

    [Fact]
    public void Linear_member_forces_and_reactions_match_the_method_of_joints()
    {
        var model = StructuralModel.Create(Truss());
        var r = LinearStaticAnalysis.Run(model);
        double s13 = Math.Sqrt(13);
        var expected = new Dictionary<string, double>
        {
            ["AB"] = 27.5, ["BC"] = 22.5, ["AD"] = -8.75 * s13, ["BD"] = 8.75 * s13,
            ["BE"] = 11.25 * s13, ["CE"] = -11.25 * s13, ["DE"] = -45.0,
        };
        for (int b = 0; b < model.BarCount; b++)
            Assert.Equal(expected[model.BarIds[b]], r.BarForces[b], 1e-9);
        Assert.Equal(-10.0, r.Reactions[3 * 0 + 0], 1e-9);
        Assert.Equal(26.25, r.Reactions[3 * 0 + 1], 1e-9);
        Assert.Equal(33.75, r.Reactions[3 * 2 + 1], 1e-9);
    }
}
