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

    /// <summary>docs/api.md's label table (Glossary) lists every value of every contract enum with the label Labels.Of gives.</summary>
    [Fact]
    public void The_label_table_in_the_api_doc_matches_every_contract_enum_value()
    {
        var dir = new DirectoryInfo(AppContext.BaseDirectory);
        while (dir is not null && !File.Exists(Path.Combine(dir.FullName, "PathService.sln"))) dir = dir.Parent;
        Assert.NotNull(dir);
        var rows = File.ReadAllLines(Path.Combine(dir!.FullName, "docs", "api.md"))
            .Select(l => System.Text.RegularExpressions.Regex.Match(l, @"^\| `(\w+)` \| `([A-Z0-9_]+)` \| (\d+) \| `([a-z0-9_]+)` \|$"))
            .Where(m => m.Success).Select(m => (Enum: m.Groups[1].Value, Value: m.Groups[2].Value, Number: int.Parse(m.Groups[3].Value, System.Globalization.CultureInfo.InvariantCulture), Label: m.Groups[4].Value))
            .ToList();
        var expected = new List<(string, string, int, string)>();
        foreach (var e in typeof(StructureModel).Assembly.GetTypes().Where(t => t.IsEnum && t.Namespace == "PathService.Contracts.V1" && !t.IsNested))
            foreach (var name in Enum.GetNames(e))
            {
                var field = e.GetField(name)!;
                string wire = field.GetCustomAttributes(typeof(Google.Protobuf.Reflection.OriginalNameAttribute), false).Cast<Google.Protobuf.Reflection.OriginalNameAttribute>().Single().Name;
                int number = (int)field.GetValue(null)!;
                expected.Add((e.Name, wire, number, Labels.Of(e, number)));
            }
        Assert.Equal(expected.OrderBy(t => t.Item2).ToList(), rows.Select(r => (r.Enum, r.Value, r.Number, r.Label)).OrderBy(t => t.Item2).ToList());
    }
}
