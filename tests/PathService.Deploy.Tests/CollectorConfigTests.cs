using System.Text.Json.Nodes;
using static PathService.Deploy.Tests.Repo;

namespace PathService.Deploy.Tests;

public class CollectorConfigTests
{
    private static readonly JsonNode Config = LoadYamlSingle("deploy/otel-collector.yaml");

    [Fact]
    public void Pipelines_use_only_components_the_config_defines()
    {
        var pipelines = Config["service"]!["pipelines"]!.AsObject();
        Assert.True(pipelines.ContainsKey("traces") && pipelines.ContainsKey("metrics"));
        foreach (var (name, p) in pipelines)
            foreach (var kind in new[] { "receivers", "processors", "exporters" })
                foreach (var c in p![kind]?.AsArray() ?? [])
                    Assert.True(Config[kind]!.AsObject().ContainsKey(Str(c)!), $"pipeline {name} uses undefined {kind} {c}");
        foreach (var (name, p) in pipelines)
        {
            var processors = p!["processors"]!.AsArray().Select(Str).ToList();
            Assert.Equal("memory_limiter", processors[0]);
            Assert.Equal("batch", processors[^1]);
        }
        Assert.NotNull(Config["exporters"]!["prometheus"]);
        Assert.Contains(Config["exporters"]!.AsObject(), kv => kv.Key == "otlp" || kv.Key.StartsWith("otlp/"));
    }

    [Fact]
    public void The_servers_otlp_endpoint_reaches_the_collectors_otlp_grpc_receiver()
    {
        string receiver = Str(Config["receivers"]!["otlp"]!["protocols"]!["grpc"]!["endpoint"])!;
        var endpoint = new Uri(Str(Object("ConfigMap", "pathservice-config")["data"]!["PathService__Telemetry__OtlpEndpoint"])!);
        Assert.Equal(int.Parse(receiver.Split(':').Last()), endpoint.Port);
        Assert.Equal("http", endpoint.Scheme);
    }
}
