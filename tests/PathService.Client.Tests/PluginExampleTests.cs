using PathService.Client.Calls;
using PathService.Contracts.V1;

namespace PathService.Client.Tests;

public class PluginExampleTests
{
    [Fact]
    public async Task The_plugin_example_meshes_its_segments_and_reaches_a_located_critical_point()
    {
        await using var server = await LoopbackServer.StartAsync();
        var output = new StringWriter();
        var first = await PluginClient.Program.RunAsync(new ConnectionOptions { Addresses = [server.GrpcUrl] }, output, CancellationToken.None);
        string text = output.ToString();
        // 5 × 5 joints; 2·4·5 grid bars and 16 diagonals; every gap (0.3 mm) closed by the 1 mm tolerance.
        Assert.Contains("25 nodes, 56 bars", text);
        Assert.DoesNotContain("geometry:", text);
        Assert.NotNull(first);
        Assert.True(first!.Located, text);
        Assert.True(first.LoadFactor > 0, text);
        Assert.Contains("qualified engineer", text);
    }
}
