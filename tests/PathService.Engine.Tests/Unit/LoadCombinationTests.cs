using PathService.Engine.Analyses;
using PathService.Engine.Model;

namespace PathService.Engine.Tests.Unit;

/// <summary>Load sets, self-weight and factored combinations resolve into F_const and F_ref.</summary>
public class LoadCombinationTests
{
    private static ModelDefinition Frame()
    {
        // A plane triangle of two 5 m rafters on a 8 m tie, rise 3 m, in the x-z plane; density of steel 7.85 t/m³.
        const double E = 2.1e8, A = 1.0e-3;
        return new ModelDefinition
        {
            Nodes = [new("L", 0, 0, 0), new("R", 8, 0, 0), new("T", 4, 0, 3)],
            Bars = [new("LT", "L", "T", E, A) { Density = 7.85 }, new("TR", "T", "R", E, A) { Density = 7.85 }, new("LR", "L", "R", E, A) { Density = 7.85 }],
            Supports = [.. TestModels.Pin("L"), new("R", Axis.Z), new("R", Axis.Y), new("T", Axis.Y)],
            LoadSets =
            [
                new LoadSet("permanent", [new NodalLoad("T", 0, 0, -10)], SelfWeight: true),
                new LoadSet("snow", [new NodalLoad("T", 0, 0, -20)]),
            ],
            // EN 1990 eq. (6.10) with γG = 1.35, γQ = 1.5.
            Combination = new LoadCombination("ULS", [new LoadSetFactor("permanent", 1.35)], [new LoadSetFactor("snow", 1.5)]),
        };
    }

    [Fact]
    public void Combination_and_self_weight_build_the_constant_and_reference_loads()
    {
        var model = StructuralModel.Create(Frame());
        double weight = 7.85 * 1.0e-3 * (5 + 5 + 8) * 9.81; // ρ·A·ΣL·g = 1.386 kN
        Assert.Equal(-1.35 * (10 + weight), model.ConstantLoad.Where((_, i) => i % 3 == 2).Sum(), 1e-12);
        Assert.Equal(-1.5 * 20, model.ReferenceLoad.Where((_, i) => i % 3 == 2).Sum(), 1e-12);
        // Half of each bar's weight goes to each end: the top node carries half of both rafters.
        Assert.Equal(-1.35 * (10 + 7.85e-3 * 5 * 9.81), model.ConstantLoad[3 * 2 + 2], 1e-12);
        var r = LinearStaticAnalysis.Run(model);
        Assert.Equal(1.35 * (10 + weight) + 1.5 * 20, r.Reactions[2] + r.Reactions[5], 1e-9);
    }

    [Fact]
    public void Unknown_load_set_and_negative_density_are_reported()
    {
        var def = Frame() with
        {
            Bars = [new("LT", "L", "T", 2.1e8, 1e-3) { Density = -1 }, new("TR", "T", "R", 2.1e8, 1e-3), new("LR", "L", "R", 2.1e8, 1e-3)],
            Combination = new LoadCombination("ULS", [], [new LoadSetFactor("wind", 1.5)]),
        };
        var findings = ModelValidator.Validate(def);
        Assert.Contains(findings, f => f.Code == FindingCode.UnknownLoadSet && f.FieldPath == "combination.reference[0].load_set" && f.Message.Contains("'wind'"));
        Assert.Contains(findings, f => f.Code == FindingCode.NegativeDensity && f.FieldPath == "bars[0].density");
        Assert.Contains(findings, f => f.Code == FindingCode.NoReferenceLoad);
    }

    [Fact]
    public void Self_weight_without_any_density_is_a_warning_of_its_own()
    {
        var def = Frame() with
        {
            Bars = [new("LT", "L", "T", 2.1e8, 1e-3), new("TR", "T", "R", 2.1e8, 1e-3), new("LR", "L", "R", 2.1e8, 1e-3)],
            LoadSets = [new LoadSet("permanent", [new NodalLoad("T", 0, 0, -10)], SelfWeight: true)],
            Combination = new LoadCombination("SLS", [], [new LoadSetFactor("permanent", 1.0)]),
        };
        var f = Assert.Single(ModelValidator.Validate(def), x => x.FieldPath == "load_sets[0].self_weight");
        Assert.Equal((FindingSeverity.Warning, FindingCode.SelfWeightWithoutDensity, "permanent"), (f.Severity, f.Code, f.ItemId));
    }
}
