using System.Xml.Linq;
using PathService.Cli.Plots;

namespace PathService.Cli.Tests;

public class SensitivityPictureTests
{
    [Fact]
    public void Members_are_coloured_by_their_gain_with_a_legend_in_units_and_the_best_named()
    {
        // Four bars of a square frame in the x-y plane (z up), one with a negative gain.
        double[] coords = [0, 0, 0, 4, 0, 0, 4, 4, 0, 0, 4, 0];
        var input = new SensitivityInput("frame: material gain", "m", coords, [(0, 1), (1, 2), (2, 3), (3, 0)],
            ["south", "east", "north", "west"], [8.0, 2.0, -4.0, 0.0], 2, "Results aid a qualified engineer's judgement.");
        var doc = XDocument.Parse(SensitivityPlot.Render(input));
        var lines = doc.Descendants().Where(e => (string?)e.Attribute("class") == "bar-sensitivity").ToList();
        Assert.Equal(8, lines.Count); // four bars in each of two views
        var strokes = lines.Select(l => (string)l.Attribute("stroke")!).ToHashSet();
        Assert.Contains(SensitivityPlot.Colour(1.0), strokes);   // the best member at full teal
        Assert.Contains(SensitivityPlot.Colour(-0.5), strokes);  // the negative one in amber
        Assert.Contains(doc.Descendants(), e => (string?)e.Attribute("class") == "legend-unit" && e.Value.Contains("[1/m³]"));
        var ranking = doc.Descendants().Single(e => (string?)e.Attribute("class") == "ranking").Value;
        Assert.StartsWith("most effective members: south (8), east (2)", ranking);
        Assert.DoesNotContain("north", ranking);
        Assert.Contains(doc.Descendants(), e => (string?)e.Attribute("class") == "caution");
    }

    [Fact]
    public void The_scale_runs_from_amber_through_pale_to_teal_and_clamps_outside_minus_one_to_one()
    {
        Assert.Equal("#e2e2dc", SensitivityPlot.Colour(0));
        Assert.Equal("#007676", SensitivityPlot.Colour(1));
        Assert.Equal("#c47800", SensitivityPlot.Colour(-1));
        Assert.Equal(SensitivityPlot.Colour(1), SensitivityPlot.Colour(7));
        Assert.Equal(SensitivityPlot.Colour(0), SensitivityPlot.Colour(double.NaN));
    }
}
