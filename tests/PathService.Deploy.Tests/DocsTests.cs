using System.Reflection;
using System.Text.RegularExpressions;
using PathService.Server.Configuration;
using static PathService.Deploy.Tests.Repo;

namespace PathService.Deploy.Tests;

/// <summary>The operator and API documentation keep up with the contract, the settings and the exported metrics.</summary>
[Collection(LiveServerCollection.Name)]
public class DocsTests(LiveServer server)
{
    private static string Doc(string name) => File.ReadAllText(PathOf("docs", name));

    /// <summary>Every finding code the engine can raise is in the error-reasons table of docs/api.md, as it goes on the wire.</summary>
    [Fact]
    public void Every_finding_code_is_documented_in_the_error_reasons_table()
    {
        string api = Doc("api.md");
        foreach (var code in Enum.GetValues<PathService.Engine.Model.FindingCode>())
            Assert.Contains($"| `{PathService.Contracts.Mapping.FieldPaths.CodeName(code)}` |", api);
    }

    [Theory]
    [InlineData("operations.md")]
    [InlineData("api.md")]
    [InlineData("cli.md")]
    public void Each_doc_carries_the_caution(string name)
    {
        string text = Doc(name);
        Assert.Contains("qualified engineer's judgement", text);
        Assert.Contains("licensed practice", text);
        Assert.Contains("units of every input", text);
    }

    [Fact]
    public void Api_doc_describes_every_message_enum_and_field_of_the_contract()
    {
        string api = Doc("api.md");
        foreach (var file in Directory.GetFiles(PathOf("protos", "pathservice", "v1"), "*.proto"))
        {
            string proto = File.ReadAllText(file);
            foreach (Match m in Regex.Matches(proto, @"^\s*(message|enum)\s+(\w+)", RegexOptions.Multiline))
                Assert.Contains($"`{m.Groups[2].Value}`", api);
            foreach (Match m in Regex.Matches(proto, @"^\s*(?:optional\s+|repeated\s+)?[\w.]+\s+(\w+)\s*=\s*\d+;", RegexOptions.Multiline))
                Assert.Contains($"`{m.Groups[1].Value}`", api);
            foreach (Match m in Regex.Matches(proto, @"^\s*([A-Z][A-Z0-9_]+)\s*=\s*\d+;", RegexOptions.Multiline))
                Assert.Contains($"`{m.Groups[1].Value}`", api);
        }
        foreach (var route in new[] { "/v1/models:check", "/v1/analyses:linear", "/v1/analyses:buckling" }) Assert.Contains(route, api);
        foreach (var status in new[] { "INVALID_ARGUMENT", "FAILED_PRECONDITION", "RESOURCE_EXHAUSTED", "BadRequest", "ErrorInfo", "MECHANISM", "QuotaFailure", "RetryInfo" })
            Assert.Contains(status, api);
    }

    [Fact]
    public void Operations_doc_lists_every_setting_as_its_environment_variable()
    {
        string ops = Doc("operations.md");
        void Walk(Type type, string prefix)
        {
            foreach (var p in type.GetProperties(BindingFlags.Public | BindingFlags.Instance).Where(p => p.CanWrite))
            {
                // A list of entries is documented as its first element's keys (…__Keys__0__Name).
                if (p.PropertyType.IsGenericType && p.PropertyType.GetGenericTypeDefinition() == typeof(List<>))
                    Assert.Contains($"`{prefix}__{p.Name}__0__", ops);
                else if (p.PropertyType.IsClass && p.PropertyType != typeof(string)) Walk(p.PropertyType, $"{prefix}__{p.Name}");
                else Assert.Contains($"`{prefix}__{p.Name}`", ops);
            }
        }
        Walk(typeof(PathServiceOptions), PathServiceOptions.Section);
    }

    [Fact]
    public void Operations_doc_explains_every_metric_of_the_service()
    {
        string ops = Doc("operations.md");
        foreach (var name in server.SeriesNames.Where(n => n.StartsWith("pathservice_")))
            Assert.Contains(Regex.Replace(name, "_(bucket|sum|count)$", ""), ops);
        foreach (var rule in LoadYamlSingle("deploy/prometheus-rules.yaml")["groups"]!.AsArray().SelectMany(g => g!["rules"]!.AsArray()))
            Assert.Contains($"`{Str(rule!["alert"])}`", ops);
    }
}
