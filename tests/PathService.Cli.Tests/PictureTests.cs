using System.Xml.Linq;
using PathService.Cli.Backends;
using PathService.Cli.Output;

namespace PathService.Cli.Tests;

public class PictureTests
{
    private static readonly XNamespace Svg = "http://www.w3.org/2000/svg";

    private static void AssertCurveSvg(string svg)
    {
        var doc = XDocument.Parse(svg); // well-formed XML
        var classes = doc.Descendants().Select(e => (Element: e, Class: (string?)e.Attribute("class") ?? "")).ToList();
        var stable = classes.Where(c => c.Element.Name.LocalName == "polyline" && c.Class == "curve curve-stable").ToList();
        Assert.NotEmpty(stable);
        Assert.All(stable, c => Assert.True(c.Element.Attribute("points")!.Value.Split(' ').Length >= 2));
        // The dome snaps through: part of its path is unstable, and two limit points are marked.
        Assert.Contains(classes, c => c.Element.Name.LocalName == "polyline" && c.Class == "curve curve-unstable");
        Assert.True(classes.Count(c => c.Class.Split(' ').Contains("critical-point") && c.Class.Contains("critical-limit")) >= 2);
        var labels = classes.Where(c => c.Class == "axis-label").Select(c => c.Element.Value).ToList();
        Assert.Equal(2, labels.Count);
        Assert.Contains(labels, l => l.StartsWith("displacement crown.z") && l.EndsWith("[m]"));
        Assert.Contains(labels, l => l.StartsWith("load factor λ") && l.Contains("kN"));
        Assert.Contains(classes, c => c.Class == "caution" && c.Element.Value.Contains("qualified engineer"));
    }

    [Fact]
    public async Task Curve_of_the_dome_has_stable_and_unstable_runs_limit_point_markers_and_axis_labels_with_units()
    {
        var request = RequestReader.Read(Repo.Example("market-hall-dome.json"));
        await using var backend = new InProcessBackend();
        var rec = await Traces.RecordAsync(backend, request);
        Assert.True(rec.Criticals.Count(c => c.Kind == Contracts.V1.CriticalPointKind.LimitPoint) >= 2);
        AssertCurveSvg(Pictures.Curve(request, rec));
    }

    [Fact]
    public async Task Demo_command_writes_curve_shape_and_tables()
    {
        string dir = Directory.CreateTempSubdirectory("pathtrace-demo-").FullName;
        try
        {
            var (code, stdout, stderr) = await Pathtrace.RunAsync(dir, "demo", "--out", dir, "--quiet");
            Assert.True(code == 0, stderr);
            foreach (var f in new[] { "path.csv", "path.jsonl", "summary.json", "events.csv", "curve.svg", "shape.svg" })
                Assert.True(File.Exists(Path.Combine(dir, f)), $"{f} missing; stdout: {stdout}");
            // events.csv: one row per critical point of the stream, each with its multiplicity and location.
            var events = File.ReadAllLines(Path.Combine(dir, "events.csv"));
            Assert.StartsWith("event,sequence,branch,kind,load_factor", events[0]);
            int criticals = File.ReadAllLines(Path.Combine(dir, "path.jsonl")).Count(l => l.Contains("\"criticalPoint\""));
            Assert.Equal(criticals, events.Count(l => l.StartsWith("critical_point,")));
            Assert.All(events.Where(l => l.StartsWith("critical_point,")), l => Assert.Contains(",true,", l));
            AssertCurveSvg(File.ReadAllText(Path.Combine(dir, "curve.svg")));
            var shape = XDocument.Parse(File.ReadAllText(Path.Combine(dir, "shape.svg")));
            Assert.Contains(shape.Descendants(), e => e.Value.Contains("deformed shape"));
        }
        finally { Directory.Delete(dir, recursive: true); }
    }

    private static List<string> ViewLabels(string svg) =>
        XDocument.Parse(svg).Descendants().Where(e => (string?)e.Attribute("class") == "view-label").Select(e => e.Value).ToList();

    [Fact]
    public async Task Shape_views_take_the_up_axis_from_the_loads_for_a_y_up_model_and_a_z_up_model()
    {
        await using var backend = new InProcessBackend();
        // The roof truss stands in the x-y plane and is loaded along −y: y is up, the truss is seen face on in elevation.
        var truss = RequestReader.Read(Repo.Example("roof-truss-spring-bearings.json"));
        truss.Controls.FullStateAtEnd = true;
        var trussShape = Pictures.Shape(truss, await Traces.RecordAsync(backend, truss), null, null)!;
        Assert.Equal(["plan (x–z, y up)", "elevation (x–y)"], ViewLabels(trussShape));
        // The dome is loaded along −z: z is up.
        var dome = RequestReader.Read(Repo.Example("market-hall-dome.json"));
        dome.Controls.FullStateAtEnd = true;
        var labels = ViewLabels(Pictures.Shape(dome, await Traces.RecordAsync(backend, dome), null, null)!);
        Assert.Equal(2, labels.Count);
        Assert.EndsWith(", z up)", labels[0]);
        Assert.StartsWith("elevation (", labels[1]);
        Assert.EndsWith("–z)", labels[1]);
    }

    [Theory]
    [InlineData(0, 0, -5, null, 2)]
    [InlineData(0, -10, 0, null, 1)]
    [InlineData(3, 0, 0, null, 0)]
    [InlineData(0, 0, 0, null, 2)]
    [InlineData(0, 0, -5, 1, 1)] // gravity along −y wins over the loads when self-weight is used
    public void Up_axis_comes_from_gravity_else_from_the_load_resultant(double fx, double fy, double fz, int? gravityAxis, int expected)
    {
        double[]? gravity = gravityAxis is { } g ? [g == 0 ? -9.81 : 0, g == 1 ? -9.81 : 0, g == 2 ? -9.81 : 0] : null;
        Assert.Equal(expected, Plots.DeformedShapePlot.UpAxisOf(gravity, [fx, fy, fz]));
    }
}
