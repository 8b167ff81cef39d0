using PathService.Ifc.Mapping;

namespace PathService.Ifc.Tests;

public class DependencyTests
{
    [Fact]
    public void The_ifc_library_references_the_client_library_and_neither_the_engine_nor_the_contract_mapping()
    {
        var names = typeof(IfcImport).Assembly.GetReferencedAssemblies().Select(a => a.Name).ToList();
        Assert.Contains("PathService.Client", names);
        Assert.DoesNotContain("PathService.Engine", names);
        Assert.DoesNotContain("PathService.Contracts", names);
    }
}
