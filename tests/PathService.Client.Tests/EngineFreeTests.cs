using PathService.Client.Calls;

namespace PathService.Client.Tests;

public class EngineFreeTests
{
    /// <summary>A plug-in that takes the client must not carry the engine, the mapping or ASP.NET Core.</summary>
    [Fact]
    public void The_client_library_references_no_engine_contracts_mapping_or_server_assembly()
    {
        var referenced = typeof(PathServiceConnection).Assembly.GetReferencedAssemblies().Select(a => a.Name!).ToList();
        Assert.Contains("Google.Protobuf", referenced);
        Assert.DoesNotContain(referenced, n => n.StartsWith("PathService.", StringComparison.Ordinal));
        Assert.DoesNotContain(referenced, n => n.StartsWith("Microsoft.AspNetCore", StringComparison.Ordinal));
    }
}
