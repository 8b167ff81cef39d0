using System.Xml.Linq;

namespace PathService.Cli.Tests;

/// <summary>The knock-down sweep from the command line: table, CSV and picture.</summary>
public class SweepTests
{
    [Fact]
    public async Task Sweep_of_the_demo_dome_knocks_the_limit_load_down_and_plots_the_curve()
    {
        string dir = Path.Combine(Path.GetTempPath(), "pathtrace-sweep-" + Guid.NewGuid().ToString("N"));
        Directory.CreateDirectory(dir);
        try
        {
            var (code, stdout, stderr) = await Pathtrace.RunAsync(dir, "sweep", Repo.Example("market-hall-dome.json"),
                "--amplitudes=-0.0005,-0.001,-0.002", "--unit", "span", "--out", dir);
            Assert.True(code == 0, stderr + stdout);
            Assert.Contains("perfect structure: LimitPoint", stdout);
            // Knock-downs from the CSV: below 1 and falling with the amplitude (the crown-lowering sign of mode 1).
            var rows = File.ReadAllLines(Path.Combine(dir, "knockdown.csv")).Skip(1).Select(l => l.Split(',')).ToList();
            Assert.Equal(3, rows.Count);
            var knock = rows.Select(r => double.Parse(r[3], System.Globalization.CultureInfo.InvariantCulture)).ToList();
            Assert.All(knock, k => Assert.True(k < 1));
            Assert.True(knock[0] > knock[1] && knock[1] > knock[2]);
            var svg = XDocument.Load(Path.Combine(dir, "knockdown.svg"));
            var classes = svg.Descendants().Select(e => (string?)e.Attribute("class") ?? "").ToList();
            Assert.Contains("knock-down-curve", classes);
            Assert.Contains("perfect-reference", classes);
            Assert.Equal(4, classes.Count(c => c == "knock-down-point")); // the perfect structure and three amplitudes
            Assert.Equal(2, classes.Count(c => c == "axis-label"));
        }
        finally { Directory.Delete(dir, true); }
    }

    [Theory]
    [InlineData("--amplitudes", "0.001,abc", "'abc' is not a number")]
    [InlineData("--unit", "inches", "--unit must be 'length' or 'span'")]
    public async Task Bad_sweep_options_exit_1_naming_the_option(string option, string value, string message)
    {
        string[] args = option == "--amplitudes"
            ? ["sweep", Repo.Example("market-hall-dome.json"), option, value]
            : ["sweep", Repo.Example("market-hall-dome.json"), "--amplitudes", "0.001", option, value];
        var (code, _, stderr) = await Pathtrace.RunAsync(Path.GetTempPath(), args);
        Assert.Equal(1, code);
        Assert.Contains(message, stderr);
    }
}
