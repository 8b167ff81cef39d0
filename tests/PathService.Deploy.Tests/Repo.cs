using System.Text.Json.Nodes;
using YamlDotNet.Core;
using YamlDotNet.Core.Events;
using YamlDotNet.Serialization;

namespace PathService.Deploy.Tests;

/// <summary>Paths of the repository and loading of its YAML and JSON files as JSON nodes (scalars become strings).</summary>
public static class Repo
{
    public static string Root { get; } = FindRoot();

    public static string PathOf(params string[] parts) => Path.Combine([Root, .. parts]);

    private static string FindRoot()
    {
        for (var dir = new DirectoryInfo(AppContext.BaseDirectory); dir is not null; dir = dir.Parent)
            if (File.Exists(Path.Combine(dir.FullName, "PathService.sln"))) return dir.FullName;
        throw new InvalidOperationException("PathService.sln not found above " + AppContext.BaseDirectory);
    }

    /// <summary>Every YAML file of deploy/ (the collector config, rules and adapter rule included).</summary>
    public static IEnumerable<string> DeployYamlFiles() =>
        Directory.GetFiles(PathOf("deploy"), "*.yaml").Order(StringComparer.Ordinal);

    /// <summary>All documents of a (multi-document) YAML file; throws on a syntax error.</summary>
    public static List<JsonNode> LoadYaml(string path)
    {
        var deserializer = new DeserializerBuilder().Build();
        var parser = new Parser(new StringReader(File.ReadAllText(path)));
        parser.Consume<StreamStart>();
        var docs = new List<JsonNode>();
        while (parser.Accept<DocumentStart>(out _))
        {
            var doc = deserializer.Deserialize<object?>(parser);
            if (doc is not null) docs.Add(ToJson(doc)!);
        }
        return docs;
    }

    public static JsonNode LoadYamlSingle(string relative) => Assert.Single(LoadYaml(PathOf(relative.Split('/'))));

    /// <summary>Kubernetes objects of deploy/: documents with apiVersion and kind (the kustomization excluded).</summary>
    public static List<(string File, JsonNode Doc)> KubernetesObjects() =>
        DeployYamlFiles().SelectMany(f => LoadYaml(f).Select(d => (Path.GetFileName(f), d)))
            .Where(t => t.d["apiVersion"] is not null && t.d["kind"] is not null && t.d["kind"]!.GetValue<string>() != "Kustomization")
            .ToList();

    public static JsonNode Object(string kind, string? name = null) =>
        Assert.Single(KubernetesObjects(), t => t.Doc["kind"]!.GetValue<string>() == kind && (name is null || Str(t.Doc["metadata"]!["name"]) == name)).Doc;

    public static string? Str(JsonNode? n) => n?.GetValue<string>();

    private static JsonNode? ToJson(object? o) => o switch
    {
        null => null,
        IDictionary<object, object?> map => new JsonObject(map.Select(kv => KeyValuePair.Create(kv.Key.ToString()!, ToJson(kv.Value)))),
        IList<object?> list => new JsonArray(list.Select(ToJson).ToArray()),
        _ => JsonValue.Create(o.ToString()),
    };
}
