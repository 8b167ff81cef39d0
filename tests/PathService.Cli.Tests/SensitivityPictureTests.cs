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
        Assert.Contains(doc.Descendants(), e => (string?)e.Attribute("class") == "gradient-caution" && e.Value.Contains("a gradient is local"));
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

public class SensitivityOutputTests
{
    /// <summary>
    /// The two-bar truss traced with --design-sensitivities: sensitivity.csv holds dλ/dA = λ_L/(2A) for each bar at
    /// both limit points (λ_L ∝ A, docs/theory.md §6.1 and §13) with its unit, and sensitivity.svg names the members.
    /// </summary>
    [Fact]
    public async Task Trace_with_design_sensitivities_writes_the_table_and_the_picture()
    {
        const double area = 1.2e-3;
        var model = new Contracts.V1.StructureModel { Name = "ridge pair", Units = new Contracts.V1.UnitLabels { Force = "kN", Length = "m" } };
        model.Nodes.Add(new Contracts.V1.Node { Id = "left", X = -4 });
        model.Nodes.Add(new Contracts.V1.Node { Id = "apex", Y = 0.35 });
        model.Nodes.Add(new Contracts.V1.Node { Id = "right", X = 4 });
        model.Bars.Add(new Contracts.V1.Bar { Id = "bar-L", StartNode = "left", EndNode = "apex", ElasticModulus = 2e8, Area = area });
        model.Bars.Add(new Contracts.V1.Bar { Id = "bar-R", StartNode = "apex", EndNode = "right", ElasticModulus = 2e8, Area = area });
        foreach (var n in new[] { "left", "right" })
            foreach (var d in new[] { Contracts.V1.Direction.X, Contracts.V1.Direction.Y, Contracts.V1.Direction.Z })
                model.Supports.Add(new Contracts.V1.Support { Node = n, Direction = d });
        model.Supports.Add(new Contracts.V1.Support { Node = "apex", Direction = Contracts.V1.Direction.X });
        model.Supports.Add(new Contracts.V1.Support { Node = "apex", Direction = Contracts.V1.Direction.Z });
        var apexY = new Contracts.V1.DofRef { Node = "apex", Direction = Contracts.V1.Direction.Y };
        var request = new Contracts.V1.TracePathRequest
        {
            Model = model, LoadCase = new Contracts.V1.LoadCase { Reference = { new Contracts.V1.NodalLoad { Node = "apex", Fy = -10 } } },
            Controls = new Contracts.V1.SolverControls
            {
                Method = Contracts.V1.ContinuationMethod.ArcLength, InitialLoadIncrement = 0.5, MaxPoints = 400,
                TargetDisplacementDof = apexY, TargetDisplacement = -0.8, Monitored = { apexY },
            },
        };
        string dir = Directory.CreateTempSubdirectory("pathtrace-sensitivity-").FullName;
        try
        {
            string file = Path.Combine(dir, "ridge.json");
            File.WriteAllText(file, Google.Protobuf.JsonFormatter.Default.Format(request));
            var (code, stdout, stderr) = await Pathtrace.RunAsync(dir, "trace", file, "--design-sensitivities", "--out", dir);
            Assert.True(code == 0, stderr + stdout);
            Assert.Contains("members where added material raises λ_cr most", stdout);
            var rows = File.ReadAllLines(Path.Combine(dir, "sensitivity.csv"));
            Assert.Equal("critical_point,load_factor,kind,item_kind,item,parameter,derivative,unit,breaks_bifurcation", rows[0]);
            var areaRows = rows.Skip(1).Select(r => r.Split(',')).Where(c => c[3] == "bar" && c[5] == "area").ToList();
            Assert.Equal(4, areaRows.Count); // two bars at each of the two limit points
            foreach (var c in areaRows)
            {
                double lambda = double.Parse(c[1], System.Globalization.CultureInfo.InvariantCulture);
                double d = double.Parse(c[6], System.Globalization.CultureInfo.InvariantCulture);
                Assert.Equal("limit_point", c[2]);
                Assert.Equal("1/m²", c[7]);
                Assert.Equal("false", c[8]); // a limit point breaks nothing
                Assert.True(Math.Abs(d - lambda / (2 * area)) <= 1e-12 * Math.Abs(d), $"{string.Join(',', c)}");
            }
            string svg = File.ReadAllText(Path.Combine(dir, "sensitivity.svg"));
            Assert.Contains("bar-L", svg);
            Assert.Contains("[1/m³]", svg);
        }
        finally { Directory.Delete(dir, recursive: true); }
    }
}
