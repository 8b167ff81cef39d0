using System.Xml.Linq;

namespace PathService.Cli.Tests;

/// <summary>The imperfection sweep (knock-down curve) from the command line: table, CSV and picture.</summary>
public class ImperfectionSweepTests
{
    [Fact]
    public async Task Sweep_of_the_demo_dome_knocks_the_limit_load_down_and_plots_the_curve()
    {
        string dir = Path.Combine(Path.GetTempPath(), "pathtrace-sweep-" + Guid.NewGuid().ToString("N"));
        Directory.CreateDirectory(dir);
        try
        {
            var (code, stdout, stderr) = await Pathtrace.RunAsync(dir, "imperfection-sweep", Repo.Example("market-hall-dome.json"),
                "--amplitudes=-0.0005,-0.001,-0.002", "--amplitude-unit", "span-fraction", "--out", dir);
            Assert.True(code == 0, stderr + stdout);
            Assert.Contains("perfect structure: limit_point", stdout);
            // Knock-downs from the CSV: below 1 and falling with the amplitude (the crown-lowering sign of mode 1).
            var rows = File.ReadAllLines(Path.Combine(dir, "knockdown.csv")).Skip(1).Select(l => l.Split(',')).ToList();
            Assert.Equal(3, rows.Count);
            Assert.All(rows, r => Assert.Equal("limit_point", r[2])); // the contract label (Labels.Of), as everywhere
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
    [InlineData("--amplitudes", "0.001,abc", "--amplitudes: 'abc' is not a number")]
    [InlineData("--amplitude-unit", "inches", "--amplitude-unit must be 'length' or 'span-fraction', not 'inches'")]
    [InlineData("--modes", "1,0", "--modes: '0' is not a mode number")]
    [InlineData("--weights", "1,0.5", "--weights gives 2 weights for 1 modes")]
    [InlineData("--span", "12", "--span applies only with --amplitude-unit span-fraction")]
    public async Task Bad_sweep_options_exit_1_naming_the_option(string option, string value, string message)
    {
        string[] args = option == "--amplitudes"
            ? ["imperfection-sweep", Repo.Example("market-hall-dome.json"), option, value]
            : ["imperfection-sweep", Repo.Example("market-hall-dome.json"), "--amplitudes", "0.001", option, value];
        var (code, _, stderr) = await Pathtrace.RunAsync(Path.GetTempPath(), args);
        Assert.Equal(1, code);
        Assert.Contains(message, stderr);
    }

    [Fact]
    public async Task Missing_amplitudes_exit_1_and_the_old_command_name_points_to_the_new_one()
    {
        var missing = await Pathtrace.RunAsync(Path.GetTempPath(), "imperfection-sweep", Repo.Example("market-hall-dome.json"));
        Assert.Equal(1, missing.Code);
        Assert.Contains("--amplitudes", missing.Stderr);
        var old = await Pathtrace.RunAsync(Path.GetTempPath(), "sweep", Repo.Example("market-hall-dome.json"), "--amplitudes", "0.001");
        Assert.Equal(1, old.Code);
        Assert.Contains("renamed in v1: use 'imperfection-sweep'", old.Stderr);
    }
}
