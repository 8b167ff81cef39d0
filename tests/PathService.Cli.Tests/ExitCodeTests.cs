using System.Net;
using System.Net.Sockets;

namespace PathService.Cli.Tests;

/// <summary>The exit codes of docs/cli.md, from the built pathtrace run as a process.</summary>
public sealed class ExitCodeTests : IDisposable
{
    private readonly string _dir = Directory.CreateTempSubdirectory("pathtrace-exit-").FullName;

    public void Dispose() => Directory.Delete(_dir, recursive: true);

    private string Write(string name, string text)
    {
        string path = Path.Combine(_dir, name);
        File.WriteAllText(path, text);
        return path;
    }

    private static string Truss(string barExtra = "", string topExtra = "") => $$"""
        {
          "model": {
            "name": "two-bar truss",
            "units": { "force": "kN", "length": "m" },
            "nodes": [ { "id": "left", "x": -4 }, { "id": "apex", "y": 0.35 }, { "id": "right", "x": 4 } ],
            "bars": [
              { "id": "bar-L", "startNode": "left", "endNode": "apex", "elasticModulus": 2e8, "area": 1.2e-3{{barExtra}} },
              { "id": "bar-R", "startNode": "apex", "endNode": "right", "elasticModulus": 2e8, "area": 1.2e-3 }
            ],
            "supports": [
              { "node": "left", "direction": "DIRECTION_X" }, { "node": "left", "direction": "DIRECTION_Y" }, { "node": "left", "direction": "DIRECTION_Z" },
              { "node": "right", "direction": "DIRECTION_X" }, { "node": "right", "direction": "DIRECTION_Y" }, { "node": "right", "direction": "DIRECTION_Z" },
              { "node": "apex", "direction": "DIRECTION_X" }, { "node": "apex", "direction": "DIRECTION_Z" }
            ]
          },
          "loadCase": { "reference": [ { "node": "apex", "fy": -10 } ] },
          "controls": { "initialLoadIncrement": 0.5, "maxPoints": 40,
            "monitored": [ { "node": "apex", "direction": "DIRECTION_Y" } ]{{topExtra}} }
        }
        """;

    [Fact]
    public async Task A_valid_model_traced_to_its_own_stopping_rule_exits_0()
    {
        var (code, stdout, stderr) = await Pathtrace.RunAsync(_dir, "trace", Write("truss.json", Truss()), "--quiet", "--csv", Path.Combine(_dir, "path.csv"));
        Assert.True(code == 0, stderr);
        Assert.Equal(41, File.ReadAllLines(Path.Combine(_dir, "path.csv")).Length); // header + 40 points
        Assert.Contains("wrote", stdout);
    }

    [Fact]
    public async Task Invalid_json_exits_2_naming_file_line_and_column()
    {
        // Line 5 of the file: the missing comma after the "id" value is found at the next key, column 40.
        string text = Truss().Replace("\"id\": \"bar-L\", \"startNode\"", "\"id\": \"bar-L\" \"startNode\"");
        string path = Write("broken.json", text);
        var (code, _, stderr) = await Pathtrace.RunAsync(_dir, "trace", path);
        Assert.Equal(2, code);
        var lines = text.Split('\n');
        int line = Array.FindIndex(lines, l => l.Contains("\"bar-L\" \"startNode\"")) + 1;
        int column = lines[line - 1].IndexOf("\"startNode\"", StringComparison.Ordinal) + 1;
        Assert.Contains($"{path}:{line}:{column}: invalid JSON", stderr);
    }

    [Fact]
    public async Task Unknown_field_exits_2_naming_the_field_and_its_line()
    {
        string text = Truss(barExtra: ", \"yieldStrength\": 355000");
        string path = Write("unknown.json", text);
        var (code, _, stderr) = await Pathtrace.RunAsync(_dir, "trace", path);
        Assert.Equal(2, code);
        int line = Array.FindIndex(text.Split('\n'), l => l.Contains("yieldStrength")) + 1;
        Assert.Contains($"{path}:{line}:", stderr);
        Assert.Contains("yieldStrength", stderr);
    }

    [Fact]
    public async Task Validation_error_exits_2_with_the_field_path()
    {
        string path = Write("invalid.json", Truss().Replace("\"area\": 1.2e-3 }", "\"area\": 0 }"));
        var (code, _, stderr) = await Pathtrace.RunAsync(_dir, "trace", path);
        Assert.Equal(2, code);
        Assert.Contains("model.bars[1].area", stderr);
        var check = await Pathtrace.RunAsync(_dir, "check", path);
        Assert.Equal(2, check.Code);
    }

    [Fact]
    public async Task Unreachable_server_exits_4()
    {
        int port;
        using (var l = new TcpListener(IPAddress.Loopback, 0)) { l.Start(); port = ((IPEndPoint)l.LocalEndpoint).Port; }
        var (code, _, stderr) = await Pathtrace.RunAsync(_dir, "trace", Write("truss.json", Truss()), "--server", $"http://127.0.0.1:{port}", "--quiet");
        Assert.True(code == 4, $"exit {code}: {stderr}");
        Assert.Contains("server unavailable", stderr);
    }

    [Fact]
    public async Task Unknown_command_exits_1()
    {
        var (code, _, stderr) = await Pathtrace.RunAsync(_dir, "draw");
        Assert.Equal(1, code);
        Assert.Contains("unknown command", stderr);
    }
}
