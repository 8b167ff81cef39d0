using PathService.Engine.Analyses;
using PathService.Engine.Model;

namespace PathService.Engine.Tests.Unit;

/// <summary>
/// The two reasons a linearised buckling analysis refuses a well-formed structure stay apart: UNSTABLE_START only when
/// the start state under the constant load is already unstable, NO_GEOMETRIC_STIFFNESS when the reference load stresses
/// nothing (there is no buckling mode), never one for the other.
/// </summary>
public class BucklingReasonTests
{
    private static ModelDefinition Truss() => TestModels.TwoBarTruss(4, 0.35, 2.4e5, 10);

    private static double FirstFactor(ModelDefinition def) => LinearBucklingAnalysis.Run(StructuralModel.Create(def), 1).Modes[0].LoadFactor;

    [Fact]
    public void A_constant_load_beyond_the_buckling_load_is_an_unstable_start()
    {
        double mu = FirstFactor(Truss());
        Assert.True(mu > 0);
        // The same apex load as constant part at twice the first buckling factor: the start is already unstable.
        var unstable = Truss() with { Loads = new LoadCaseDefinition([new NodalLoad("apex", 0, -10 * 2 * mu, 0)], [new NodalLoad("apex", 0, -10, 0)]) };
        var ex = Assert.Throws<AnalysisInputException>(() => FirstFactor(unstable));
        Assert.Equal("UNSTABLE_START", ex.Reason);

        // At half of it the start is stable and the remaining factor is the other half: μ − μ/2 (linear in the load).
        var stable = Truss() with { Loads = new LoadCaseDefinition([new NodalLoad("apex", 0, -10 * 0.5 * mu, 0)], [new NodalLoad("apex", 0, -10, 0)]) };
        // One free DOF, so the subspace is exact: measured 3×10⁻¹⁶ relative; the tolerance is about 30 times that.
        Assert.Equal(0.5 * mu, FirstFactor(stable), 1e-14 * mu);
    }

    [Fact]
    public void A_reference_load_that_stresses_nothing_has_no_buckling_mode_and_is_not_called_unstable()
    {
        var unstressed = Truss() with { Loads = LoadCaseDefinition.ReferenceOnly(new NodalLoad("left", 0, -10, 0)) };
        var ex = Assert.Throws<AnalysisInputException>(() => FirstFactor(unstressed));
        Assert.Equal("NO_GEOMETRIC_STIFFNESS", ex.Reason);
        Assert.Equal("load_case.reference", ex.Field);
    }
}
