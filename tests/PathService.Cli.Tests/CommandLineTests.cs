namespace PathService.Cli.Tests;

/// <summary>The command line itself (System.CommandLine): help on every command, checks with clear errors, v1 names.</summary>
public class CommandLineTests
{
    private static readonly string Dome = Repo.Example("market-hall-dome.json");
    private static readonly string Tmp = Path.GetTempPath();

    [Theory]
    [InlineData("trace", "--curve-svg")]
    [InlineData("demo", "--curve-monitored")]
    [InlineData("check", "--json")]
    [InlineData("linear", "--load-factor")]
    [InlineData("buckling", "--mode-count")]
    [InlineData("batch", "--parallel")]
    [InlineData("imperfection-sweep", "--amplitude-unit")]
    public async Task Help_on_each_command_lists_its_options_and_exits_0(string command, string option)
    {
        var (code, stdout, _) = await Pathtrace.RunAsync(Tmp, command, "--help");
        Assert.Equal(0, code);
        Assert.Contains($"pathtrace {command}", stdout);
        Assert.Contains(option, stdout);
        Assert.Contains("--server", stdout); // the options of where analyses run apply to every command
    }

    [Fact]
    public async Task The_live_table_names_its_columns_for_what_they_show()
    {
        var (code, stdout, stderr) = await Pathtrace.RunAsync(Tmp, "trace", Repo.Example("roof-truss-spring-bearings.json"));
        Assert.True(code is 0 or 3, stderr);
        string header = stdout.Split('\n').First(l => l.TrimStart().StartsWith("point", StringComparison.Ordinal));
        var request = RequestReader.Read(Repo.Example("roof-truss-spring-bearings.json"));
        var first = request.Controls.Monitored[0];
        Assert.Contains($"{first.Node}.{Output.PathRecorder.Axis(first.Direction)}", header); // the component's own name
        Assert.Contains("iterations", header);
        Assert.Contains("negative pivots", header);
        Assert.EndsWith("stability", header.TrimEnd());
        Assert.DoesNotContain("monitored", header);
        // Rows end with the stability label of the contract (Labels.Of), as in path.csv.
        Assert.Contains(stdout.Split('\n'), l => l.TrimEnd().EndsWith("  stable", StringComparison.Ordinal));
    }

    [Theory]
    [InlineData(new[] { "buckling", "MODEL", "--modes", "3" }, "--modes was renamed in v1")]
    [InlineData(new[] { "trace", "MODEL", "--svg", "c.svg" }, "--svg was renamed in v1: use --curve-svg")]
    [InlineData(new[] { "trace", "MODEL", "--api-key", "k" }, "--api-key needs --server")]
    [InlineData(new[] { "trace", "MODEL", "--server", "pathservice:5180" }, "--server: 'pathservice:5180' is not an http:// or https:// address")]
    [InlineData(new[] { "buckling", "MODEL", "--mode-count", "0" }, "--mode-count must be a positive whole number, not '0'")]
    [InlineData(new[] { "batch", "MODEL", "--parallel", "abc" }, "--parallel must be a positive whole number, not 'abc'")]
    [InlineData(new[] { "linear", "MODEL", "--load-factor", "x" }, "--load-factor must be a number, not 'x'")]
    [InlineData(new[] { "trace" }, "model")]
    [InlineData(new[] { "demo" }, "--out")]
    public async Task A_bad_command_line_exits_1_with_a_clear_error(string[] args, string message)
    {
        var (code, _, stderr) = await Pathtrace.RunAsync(Tmp, args.Select(a => a == "MODEL" ? Dome : a).ToArray());
        Assert.True(code == 1, $"exit {code}: {stderr}");
        Assert.Contains(message, stderr);
    }

    [Fact]
    public async Task The_name_equals_value_form_carries_a_leading_minus_sign()
    {
        string dir = Directory.CreateTempSubdirectory("pathtrace-cl-").FullName;
        try
        {
            var (code, stdout, stderr) = await Pathtrace.RunAsync(dir, "linear", Dome, "--load-factor=-0.5");
            Assert.True(code == 0, stderr);
            Assert.Contains("at λ = -0.5", stdout);
        }
        finally { Directory.Delete(dir, true); }
    }

    [Fact]
    public void Every_command_and_option_is_documented_in_docs_cli_md()
    {
        string doc = File.ReadAllText(Path.Combine(Repo.Root, "docs", "cli.md"));
        var root = PathService.Cli.CommandLine.Build();
        foreach (var option in root.Options.Where(o => o.Name is "--server" or "--api-key" or "--ca-file")) Assert.Contains($"`{option.Name}", doc);
        foreach (var command in root.Subcommands)
        {
            Assert.Contains($"`{command.Name}", doc);
            foreach (var option in command.Options) Assert.Contains($"`{option.Name}", doc);
        }
        foreach (var (old, _) in PathService.Cli.CommandLine.RenamedInV1) Assert.Contains($"`{old}", doc); // the "Renamed in v1" table
    }
}
