using System.Reflection;
using System.Text.Json.Nodes;
using Grpc.Health.V1;
using PathService.Server.Configuration;
using PathService.Server.Hosting;
using static PathService.Deploy.Tests.Repo;

namespace PathService.Deploy.Tests;

[Collection(LiveServerCollection.Name)]
public class KubernetesManifestTests(LiveServer server)
{
    private static readonly PathServiceOptions Shipped = LiveServer.Options();
    private static JsonNode Deployment => Object("Deployment", "pathservice");
    private static JsonNode PodSpec => Deployment["spec"]!["template"]!["spec"]!;
    private static JsonNode Container => Assert.Single(PodSpec["containers"]!.AsArray())!;
    private static Dictionary<string, string> PodLabels =>
        Deployment["spec"]!["template"]!["metadata"]!["labels"]!.AsObject().ToDictionary(kv => kv.Key, kv => Str(kv.Value)!);

    private static int ContainerPort(string name) =>
        int.Parse(Str(Assert.Single(Container["ports"]!.AsArray(), p => Str(p!["name"]) == name)!["containerPort"])!);

    private static bool Selects(JsonNode? selector, Dictionary<string, string> labels) =>
        selector is JsonObject o && o.Count > 0 && o.All(kv => labels.TryGetValue(kv.Key, out var v) && v == Str(kv.Value));

    [Fact]
    public void Every_yaml_file_under_deploy_parses_and_every_kubernetes_object_has_a_name()
    {
        var files = DeployYamlFiles().ToList();
        Assert.True(files.Count >= 10, string.Join(", ", files));
        foreach (var f in files) Assert.NotEmpty(LoadYaml(f));
        foreach (var (file, doc) in KubernetesObjects())
            Assert.False(string.IsNullOrEmpty(Str(doc["metadata"]?["name"])), $"{file}: {doc["kind"]} without metadata.name");
    }

    [Fact]
    public void Container_ports_are_the_ports_of_appsettings_and_of_the_configmap()
    {
        Assert.Equal(Shipped.GrpcPort, ContainerPort("grpc"));
        Assert.Equal(Shipped.HttpPort, ContainerPort("http"));
        var data = Object("ConfigMap", "pathservice-config")["data"]!;
        Assert.Equal(Shipped.GrpcPort.ToString(), Str(data["PathService__GrpcPort"]));
        Assert.Equal(Shipped.HttpPort.ToString(), Str(data["PathService__HttpPort"]));
        // The defaults in code agree with appsettings.json, so a missing variable changes nothing.
        Assert.Equal(new PathServiceOptions().GrpcPort, Shipped.GrpcPort);
        Assert.Equal(new PathServiceOptions().HttpPort, Shipped.HttpPort);
    }

    [Fact]
    public void Every_configmap_key_names_a_real_setting()
    {
        var data = Object("ConfigMap", "pathservice-config")["data"]!.AsObject();
        foreach (var (key, value) in data)
        {
            var parts = key.Split("__");
            if (parts[0] == "Serilog") { Assert.Equal("MinimumLevel", parts[1]); continue; }
            Assert.Equal(PathServiceOptions.Section, parts[0]);
            Type type = typeof(PathServiceOptions);
            PropertyInfo? prop = null;
            foreach (var part in parts.Skip(1))
            {
                prop = type.GetProperty(part, BindingFlags.Public | BindingFlags.Instance);
                Assert.True(prop is not null, $"{key}: {type.Name} has no setting {part}");
                type = prop!.PropertyType;
            }
            // The value converts to the setting's type.
            Assert.True(type == typeof(string) || System.ComponentModel.TypeDescriptor.GetConverter(type).IsValid(Str(value)!), $"{key}={value}");
        }
        // Every limit is set explicitly, so the manifest documents the whole contract of a pod.
        foreach (var p in typeof(LimitOptions).GetProperties())
            Assert.True(data.ContainsKey($"PathService__Limits__{p.Name}"), $"configmap lacks PathService__Limits__{p.Name}");
        Assert.Equal(Shipped.Telemetry.PrometheusPath, Str(data["PathService__Telemetry__PrometheusPath"]));
    }

    [Fact]
    public async Task Probes_use_native_grpc_checks_on_health_service_names_the_server_really_serves()
    {
        var liveness = Container["livenessProbe"]!["grpc"]!;
        var readiness = Container["readinessProbe"]!["grpc"]!;
        var startup = Container["startupProbe"]!["grpc"]!;
        Assert.Equal("", Str(liveness["service"]));
        Assert.Equal(ServerHost.HealthServiceName, Str(readiness["service"]));
        Assert.Equal("pathservice.v1.StructuralPathService", Str(readiness["service"]));
        foreach (var probe in new[] { liveness, readiness, startup })
        {
            Assert.Equal(Shipped.GrpcPort.ToString(), Str(probe["port"]));
            Assert.Equal(HealthCheckResponse.Types.ServingStatus.Serving, await server.HealthAsync(Str(probe["service"]) ?? ""));
        }
        // The check discriminates: a name the server does not register is not reported as serving.
        Assert.Equal(HealthCheckResponse.Types.ServingStatus.ServiceUnknown, await server.HealthAsync("pathservice.v1.NoSuchService"));
    }

    [Fact]
    public void Pods_run_as_the_images_non_root_user_with_a_read_only_root_and_a_termination_period_beyond_the_grace_period()
    {
        var pod = PodSpec["securityContext"]!;
        Assert.Equal("true", Str(pod["runAsNonRoot"]));
        Assert.Equal(DockerfileTests.RuntimeUser().ToString(), Str(pod["runAsUser"]));
        var c = Container["securityContext"]!;
        Assert.Equal("false", Str(c["allowPrivilegeEscalation"]));
        Assert.Equal("true", Str(c["readOnlyRootFilesystem"]));
        Assert.Contains("ALL", c["capabilities"]!["drop"]!.AsArray().Select(Str));
        Assert.Contains(Container["volumeMounts"]!.AsArray(), m => Str(m!["mountPath"]) == "/tmp");
        // One name for the grace period: Shutdown:GraceSeconds in the ConfigMap; the host's shutdownTimeoutSeconds is not set
        // (the server derives its shutdown timeout from the grace period), and the pod's termination period outlasts
        // the preStop pause plus that timeout.
        Assert.DoesNotContain(Container["env"]?.AsArray() ?? [], e => Str(e!["name"]) == "shutdownTimeoutSeconds");
        int termination = int.Parse(Str(PodSpec["terminationGracePeriodSeconds"])!);
        double grace = double.Parse(Str(Object("ConfigMap", "pathservice-config")["data"]!["PathService__Shutdown__GraceSeconds"])!, System.Globalization.CultureInfo.InvariantCulture);
        Assert.Equal(Shipped.Shutdown.GraceSeconds, grace);
        var preStop = Container["lifecycle"]!["preStop"]!["exec"]!["command"]!.AsArray().Select(Str).ToList();
        Assert.Equal("sleep", preStop[0]);
        double pause = double.Parse(preStop[1]!, System.Globalization.CultureInfo.InvariantCulture);
        Assert.True(pause + ServerHost.ShutdownTimeout(grace).TotalSeconds < termination,
            $"terminationGracePeriodSeconds {termination} must exceed the preStop pause {pause} s + the grace period {grace} s + 15 s");
    }

    [Fact]
    public void Resources_give_each_analysis_slot_a_whole_core()
    {
        var res = Container["resources"]!;
        Assert.Equal(Str(res["requests"]!["cpu"]), Str(res["limits"]!["cpu"]));
        Assert.Equal(Str(res["requests"]!["memory"]), Str(res["limits"]!["memory"]));
        int slots = int.Parse(Str(Object("ConfigMap", "pathservice-config")["data"]!["PathService__Limits__MaxConcurrentAnalyses"])!);
        Assert.Equal(slots.ToString(), Str(res["requests"]!["cpu"]));
    }

    [Fact]
    public void Prometheus_scrape_annotations_and_service_monitor_point_at_the_metrics_path_and_http_port()
    {
        var ann = Deployment["spec"]!["template"]!["metadata"]!["annotations"]!;
        Assert.Equal("true", Str(ann["prometheus.io/scrape"]));
        Assert.Equal(Shipped.Telemetry.PrometheusPath, Str(ann["prometheus.io/path"]));
        Assert.Equal(Shipped.HttpPort.ToString(), Str(ann["prometheus.io/port"]));
        var monitor = Object("ServiceMonitor", "pathservice");
        var endpoint = Assert.Single(monitor["spec"]!["endpoints"]!.AsArray())!;
        Assert.Equal(Shipped.Telemetry.PrometheusPath, Str(endpoint["path"]));
        var httpService = Object("Service", "pathservice-http");
        Assert.Contains(httpService["spec"]!["ports"]!.AsArray(), p => Str(p!["name"]) == Str(endpoint["port"]) && Str(p["targetPort"]) == "http");
        Assert.True(Selects(monitor["spec"]!["selector"]!["matchLabels"], httpService["metadata"]!["labels"]!.AsObject().ToDictionary(kv => kv.Key, kv => Str(kv.Value)!)));
    }

    [Fact]
    public void Headless_service_selects_the_pods_on_the_grpc_port_and_has_no_cluster_ip()
    {
        var svc = Object("Service", "pathservice-headless");
        Assert.Equal("None", Str(svc["spec"]!["clusterIP"]));
        Assert.True(Selects(svc["spec"]!["selector"], PodLabels));
        var port = Assert.Single(svc["spec"]!["ports"]!.AsArray())!;
        Assert.Equal(Shipped.GrpcPort.ToString(), Str(port["port"]));
        Assert.Equal(ContainerPort(Str(port["targetPort"])!), Shipped.GrpcPort);
        // The HTTP service too selects the pods and reaches the HTTP port.
        var http = Object("Service", "pathservice-http");
        Assert.True(Selects(http["spec"]!["selector"], PodLabels));
        Assert.Equal(Shipped.HttpPort, ContainerPort(Str(Assert.Single(http["spec"]!["ports"]!.AsArray())!["targetPort"])!));
    }

    [Fact]
    public void Deployment_selector_matches_its_own_pod_labels()
    {
        Assert.True(Selects(Deployment["spec"]!["selector"]!["matchLabels"], PodLabels));
        foreach (var c in PodSpec["topologySpreadConstraints"]!.AsArray())
            Assert.True(Selects(c!["labelSelector"]!["matchLabels"], PodLabels));
    }

    [Fact]
    public void Hpa_targets_the_deployment_with_cpu_and_a_metric_the_server_exports()
    {
        var hpa = Object("HorizontalPodAutoscaler", "pathservice");
        Assert.Equal("autoscaling/v2", Str(hpa["apiVersion"]));
        var target = hpa["spec"]!["scaleTargetRef"]!;
        Assert.Equal("Deployment", Str(target["kind"]));
        Assert.Equal("apps/v1", Str(target["apiVersion"]));
        Assert.Equal(Str(Deployment["metadata"]!["name"]), Str(target["name"]));
        var metrics = hpa["spec"]!["metrics"]!.AsArray();
        Assert.Contains(metrics, m => Str(m!["type"]) == "Resource" && Str(m["resource"]!["name"]) == "cpu");
        foreach (var m in metrics.Where(m => Str(m!["type"]) == "Pods"))
            Assert.Contains(Str(m!["pods"]!["metric"]!["name"])!, server.SeriesNames);
        Assert.True(int.Parse(Str(hpa["spec"]!["minReplicas"])!) >= 2, "at least two pods so that one can be lost");
    }

    [Fact]
    public void Pdb_selects_the_pods_and_leaves_some_running()
    {
        var pdb = Object("PodDisruptionBudget", "pathservice");
        Assert.Equal("policy/v1", Str(pdb["apiVersion"]));
        Assert.True(Selects(pdb["spec"]!["selector"]!["matchLabels"], PodLabels));
        int minReplicas = int.Parse(Str(Object("HorizontalPodAutoscaler")["spec"]!["minReplicas"])!);
        Assert.True(int.Parse(Str(pdb["spec"]!["maxUnavailable"])!) < minReplicas);
    }

    [Fact]
    public void Kustomization_lists_existing_files_only()
    {
        var k = LoadYamlSingle("deploy/kustomization.yaml");
        foreach (var r in k["resources"]!.AsArray()) Assert.True(File.Exists(PathOf("deploy", Str(r)!)), Str(r));
        foreach (var g in k["configMapGenerator"]!.AsArray())
            foreach (var f in g!["files"]!.AsArray())
                Assert.True(File.Exists(PathOf("deploy", Str(f)!.Split('=').Last())), Str(f));
        // Every Kubernetes object of deploy/ is either in the kustomization or documented as optional (CRD-based).
        var listed = k["resources"]!.AsArray().Select(Str).ToHashSet();
        foreach (var (file, doc) in KubernetesObjects())
            Assert.True(listed.Contains(file) || Str(doc["apiVersion"])!.StartsWith("monitoring.coreos.com/"), $"{file} is not in kustomization.yaml");
    }
}
