using PathService.Contracts.V1;

namespace PathService.Client.Tests;

public class LabelsTests
{
    [Fact]
    public void Contract_enum_values_render_without_their_prefix_in_lower_snake_case()
    {
        Assert.Equal("limit_point", Labels.Of(CriticalPointKind.LimitPoint));
        Assert.Equal("bifurcation", Labels.Of(CriticalPointKind.Bifurcation));
        Assert.Equal("target_load_factor_reached", Labels.Of(StopReason.TargetLoadFactorReached));
        Assert.Equal("max_iterations", Labels.Of(CutReason.MaxIterations));
        Assert.Equal("arc_length", Labels.Of(ContinuationMethod.ArcLength));
        Assert.Equal("unstable", Labels.Of(Stability.Unstable));
        Assert.Equal("x", Labels.Of(Direction.X));
        Assert.Equal("99", Labels.Of((Direction)99));
    }

    /// <summary>Every value of every enum in the contract has a distinct, non-empty label made of [a-z0-9_].</summary>
    [Fact]
    public void Every_contract_enum_value_has_a_distinct_plain_label()
    {
        var enums = typeof(StructureModel).Assembly.GetTypes().Where(t => t.IsEnum && t.Namespace == "PathService.Contracts.V1" && !t.IsNested).ToList();
        Assert.True(enums.Count >= 8);
        foreach (var e in enums)
        {
            var labels = Enum.GetValues(e).Cast<object>().Select(v => Labels.Of(e, (int)v)).ToList();
            Assert.Equal(labels.Count, labels.Distinct().Count());
            Assert.All(labels, l => Assert.Matches("^[a-z0-9_]+$", l));
        }
    }
}
