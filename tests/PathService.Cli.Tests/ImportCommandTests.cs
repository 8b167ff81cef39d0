using System.Text;
using PathService.Cli;
using PathService.Contracts.V1;

namespace PathService.Cli.Tests;

/// <summary>
/// pathtrace import, in this process and against a real server: the request file it writes is read back by the other
/// commands; an unreadable file exits 2 with the entity named; a bad option exits 2 naming it.
/// </summary>
public sealed class ImportCommandTests : IDisposable
{
    private readonly string _dir = Directory.CreateTempSubdirectory("pathtrace-import-").FullName;

    public void Dispose() => Directory.Delete(_dir, recursive: true);

    private static string RoofFile => Path.Combine(Repo.Root, "tests", "PathService.Ifc.Tests", "Files", "trussed-roof.ifc");

    private static void AssertRoof(TracePathRequest r, string force, string length)
    {
        Assert.Equal((8, 9, 16, 2), (r.Model.Nodes.Count, r.Model.Bars.Count, r.Model.Supports.Count, r.Model.GroundSprings.Count));
        Assert.Equal(2, r.LoadCase.Reference.Count);
        Assert.Equal((force, length), (r.Model.Units.Force, r.Model.Units.Length));
        Assert.NotNull(r.Controls);
    }

    [Fact]
    public async Task Import_in_process_writes_a_request_that_check_accepts()
    {
        string outFile = Path.Combine(_dir, "roof.json");
        var (code, stdout, stderr) = await Pathtrace.RunAsync(_dir, "import", RoofFile, "--reference-load-group", "reference", "--out", outFile);
        Assert.True(code == 0, stderr + stdout);
        Assert.Contains("8 nodes, 9 bars", stdout);
        Assert.Contains("units:", stdout);
        AssertRoof(RequestReader.Read(outFile), "kN", "m");
        var (checkCode, checkOut, checkErr) = await Pathtrace.RunAsync(_dir, "check", outFile);
        Assert.True(checkCode == 0, checkErr + checkOut);
    }

    [Fact]
    public async Task Import_with_units_scales_the_model()
    {
        string outFile = Path.Combine(_dir, "roof-mm.json");
        var (code, stdout, stderr) = await Pathtrace.RunAsync(_dir, "import", RoofFile, "--reference-load-group", "reference",
            "--force-unit", "N", "--length-unit", "mm", "--out", outFile);
        Assert.True(code == 0, stderr + stdout);
        var r = RequestReader.Read(outFile);
        AssertRoof(r, "N", "mm");
        Assert.Equal(500, r.Model.Nodes.Single(n => n.Id == "R1").Z, 1e-9);
        Assert.Equal(-10_000, r.LoadCase.Reference.Single(l => l.Node == "R1").Fz, 1e-6);
    }

    [Fact]
    public async Task Import_through_the_server_writes_the_same_request_as_in_process()
    {
        await using var server = await ServerInstance.StartAsync(slots: 1);
        string local = Path.Combine(_dir, "local.json"), remote = Path.Combine(_dir, "remote.json");
        var (c1, _, e1) = await Pathtrace.RunAsync(_dir, "import", RoofFile, "--reference-load-group", "reference", "--out", local);
        var (c2, _, e2) = await Pathtrace.RunAsync(_dir, "--server", server.GrpcUrl, "import", RoofFile, "--reference-load-group", "reference", "--out", remote);
        Assert.True(c1 == 0, e1);
        Assert.True(c2 == 0, e2);
        Assert.Equal(RequestReader.Read(local), RequestReader.Read(remote));
    }

    [Theory]
    [InlineData(false)]
    [InlineData(true)]
    public async Task A_truncated_file_exits_2_and_names_the_entity(bool viaServer)
    {
        string text = File.ReadAllText(RoofFile);
        string cut = Path.Combine(_dir, "cut.ifc");
        File.WriteAllText(cut, text[..(text.IndexOf("#40=", StringComparison.Ordinal) + 12)], Encoding.UTF8);
        await using var server = viaServer ? await ServerInstance.StartAsync(slots: 1) : null;
        string[] args = viaServer ? ["--server", server!.GrpcUrl, "import", cut] : ["import", cut];
        var (code, _, stderr) = await Pathtrace.RunAsync(_dir, args);
        Assert.Equal(ExitCodes.InvalidInput, code);
        Assert.Contains("#40", stderr);
        Assert.False(File.Exists(Path.Combine(_dir, "cut.json")));
    }

    [Fact]
    public async Task A_load_group_the_file_lacks_exits_2_and_lists_the_groups()
    {
        var (code, _, stderr) = await Pathtrace.RunAsync(_dir, "import", RoofFile, "--reference-load-group", "snow", "--out", Path.Combine(_dir, "x.json"));
        Assert.Equal(ExitCodes.InvalidInput, code);
        Assert.Contains("'snow'", stderr);
        Assert.Contains("reference", stderr);
    }

    [Fact]
    public async Task A_missing_file_exits_2_and_an_unknown_unit_exits_1()
    {
        var (missing, _, err) = await Pathtrace.RunAsync(_dir, "import", Path.Combine(_dir, "none.ifc"));
        Assert.Equal(ExitCodes.InvalidInput, missing);
        Assert.Contains("none.ifc", err);
        var (unit, _, _) = await Pathtrace.RunAsync(_dir, "import", RoofFile, "--force-unit", "lbf");
        Assert.Equal(ExitCodes.Usage, unit);
    }
}
