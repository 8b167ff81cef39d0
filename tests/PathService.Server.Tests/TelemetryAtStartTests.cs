using System.Text.RegularExpressions;
using Grpc.Core;
using PathService.Server.Telemetry;
using PathService.Server.Tests.Fixtures;

namespace PathService.Server.Tests;

/// <summary>
/// What ops build on: every counter and gauge is on /metrics from the start (a fresh pod feeds the autoscaler and
/// the rate alerts), the queue depth and authentication failures are counted, the analysis-duration histogram's
/// buckets end at the maximum trace time, and a failing collector is reported in the log.
/// </summary>
[Collection(ServerCollection.Name)]
public sealed class TelemetryAtStartTests
{
    private static async Task<string> ScrapeAsync(TestServer server)
    {
        using var http = new HttpClient { BaseAddress = new Uri(server.HttpUrl) };
        return await http.GetStringAsync("/metrics");
    }

    private static double? Value(string text, string series, params (string Label, string Value)[] labels)
    {
        foreach (Match m in Regex.Matches(text, $@"^{Regex.Escape(series)}(?:\{{([^}}]*)\}})? ([^ \n]+)", RegexOptions.Multiline))
            if (labels.All(l => m.Groups[1].Value.Contains($"{l.Label}=\"{l.Value}\"", StringComparison.Ordinal)))
                return double.Parse(m.Groups[2].Value, System.Globalization.CultureInfo.InvariantCulture);
        return null;
    }

    private static string RepoFile(params string[] parts)
    {
        var dir = new DirectoryInfo(AppContext.BaseDirectory);
        while (!File.Exists(Path.Combine(dir!.FullName, "PathService.sln"))) dir = dir.Parent;
        return Path.Combine([dir.FullName, .. parts]);
    }

    [Fact]
    public async Task A_fresh_server_exports_every_counter_and_gauge_before_the_first_call()
    {
        await using var server = await TestServer.StartAsync([]);
        string text = await ScrapeAsync(server);
        Assert.Equal(0, Value(text, "pathservice_analyses_active"));
        Assert.Equal(0, Value(text, "pathservice_analyses_queued"));
        foreach (var rpc in PathServiceTelemetry.AnalysisRpcs)
        {
            Assert.Equal(0, Value(text, "pathservice_analyses_started_total", ("rpc_method", rpc)));
            Assert.Equal(0, Value(text, "pathservice_writes_stalled_total", ("rpc_method", rpc)));
            foreach (var error in PathServiceTelemetry.ExpectedErrorTypes)
                Assert.Equal(0, Value(text, "pathservice_analyses_failed_total", ("rpc_method", rpc), ("error_type", error)));
        }
        Assert.Equal(0, Value(text, "pathservice_analyses_started_total", ("rpc_service", "pathservice.v1.StructuralPathService"), ("rpc_method", "TracePath")));
        Assert.Equal(0, Value(text, "pathservice_analyses_failed_total", ("rpc_method", "TracePath"), ("error_type", "INVALID_ARGUMENT")));
        Assert.Equal(0, Value(text, "pathservice_analyses_completed_total", ("rpc_method", "TracePath"), ("pathservice_outcome", "diverged")));
        Assert.Equal(0, Value(text, "pathservice_analyses_completed_total", ("rpc_method", "TracePath"), ("pathservice_outcome", "target_load_factor_reached")));
        Assert.Equal(0, Value(text, "pathservice_authentication_failures_total", ("error_type", "UNAUTHENTICATED")));
        Assert.Equal(0, Value(text, "pathservice_step_cuts_total", ("pathservice_cut_reason", "max_iterations")));
        Assert.Equal(0, Value(text, "pathservice_critical_points_total", ("pathservice_critical_point_kind", "limit_point")));
        foreach (var name in new[] { "pathservice_steps_total", "pathservice_divergences_total", "pathservice_step_cuts_total", "pathservice_critical_points_total", "pathservice_solve_refinements_total" })
            Assert.Equal(0, Value(text, name));

        // Every counter and gauge the alert rules and the autoscaler read is there (histograms appear with their first observation).
        string rules = await File.ReadAllTextAsync(RepoFile("deploy", "prometheus-rules.yaml")) + await File.ReadAllTextAsync(RepoFile("deploy", "hpa.yaml"));
        var used = Regex.Matches(rules, @"\bpathservice_[a-z_]+").Select(m => m.Value)
            .Where(n => !n.EndsWith("_bucket", StringComparison.Ordinal) && !n.EndsWith("_sum", StringComparison.Ordinal) && !n.EndsWith("_count", StringComparison.Ordinal))
            .ToHashSet();
        Assert.NotEmpty(used);
        foreach (var name in used) Assert.True(Value(text, name) is not null, $"{name} is not on /metrics of a fresh server");
    }

    [Fact]
    public async Task Queue_depth_authentication_failures_and_duration_buckets_are_exported()
    {
        await using var server = await TestServer.StartAsync(
        [
            "Limits:MaxConcurrentAnalyses=1", "Limits:MaxQueuedAnalyses=4", "Limits:QueueTimeoutSeconds=20", "Limits:MaxTraceSeconds=45",
            "Security:ApiKeys:Keys:0:Name=dora", "Security:ApiKeys:Keys:0:Key=dora-key-0123456789",
        ]);
        var key = new Metadata { { "x-api-key", "dora-key-0123456789" } };

        await Assert.ThrowsAsync<RpcException>(() => Requests.ReadAllAsync(server.Client.TracePath(Requests.Truss())));
        await Assert.ThrowsAsync<RpcException>(() => Requests.ReadAllAsync(server.Client.TracePath(Requests.Truss(), new Metadata { { "x-api-key", "nope" } })));
        await Requests.ReadAllAsync(server.Client.TracePath(Requests.Truss(), key));

        using var cts = new CancellationTokenSource();
        using var running = server.Client.TracePath(Requests.LongTrace(), key, cancellationToken: cts.Token);
        Assert.True(await running.ResponseStream.MoveNext());
        using var waiting = server.Client.TracePath(Requests.Truss(), key, cancellationToken: cts.Token);
        try
        {
            double? queued = null;
            for (int i = 0; i < 50 && queued != 1; i++)
            {
                await Task.Delay(100);
                queued = Value(await ScrapeAsync(server), "pathservice_analyses_queued");
            }
            Assert.Equal(1, queued);
        }
        finally
        {
            cts.Cancel();
            Assert.True(await server.WaitForIdleAsync(TimeSpan.FromSeconds(5)));
        }

        string text = await ScrapeAsync(server);
        Assert.Equal(1, Value(text, "pathservice_authentication_failures_total", ("error_type", "UNAUTHENTICATED")));
        Assert.Equal(1, Value(text, "pathservice_authentication_failures_total", ("error_type", "PERMISSION_DENIED")));
        // The completed truss trace: its duration is in every bucket from its own up to the last finite one, 45 s (MaxTraceSeconds).
        // A successful call's series has no error_type (OpenTelemetry's convention): the one without it.
        var ok = Regex.Matches(text, @"^pathservice_analysis_duration_seconds_bucket\{([^}]*)\} ([^ \n]+)", RegexOptions.Multiline)
            .Where(m => m.Groups[1].Value.Contains("rpc_method=\"TracePath\"", StringComparison.Ordinal) && !m.Groups[1].Value.Contains("error_type=", StringComparison.Ordinal))
            .ToList();
        Assert.Equal("1", Assert.Single(ok, m => m.Groups[1].Value.Contains("le=\"45\"", StringComparison.Ordinal)).Groups[2].Value);
        var bounds = Regex.Matches(text, @"^pathservice_analysis_duration_seconds_bucket\{([^}]*)le=""([^""]+)""", RegexOptions.Multiline)
            .Where(m => !m.Groups[1].Value.Contains("error_type=", StringComparison.Ordinal)).Select(m => m.Groups[2].Value)
            .Distinct().ToList();
        Assert.Equal(["45", "+Inf"], bounds.TakeLast(2));
    }

    [Fact]
    public async Task A_collector_that_cannot_be_reached_is_reported_in_the_log()
    {
        var original = Console.Out;
        var captured = new StringWriter();
        Console.SetOut(TextWriter.Synchronized(captured));
        try
        {
            // Port 1 on loopback: nothing listens, every export fails at once.
            await using var server = await TestServer.StartAsync(["Telemetry:OtlpEndpoint=http://127.0.0.1:1", "Telemetry:ExportIntervalSeconds=0.2"]);
            for (int i = 0; i < 100 && !captured.ToString().Contains("Telemetry export to the collector failed", StringComparison.Ordinal); i++)
                await Task.Delay(100);
        }
        finally { Console.SetOut(original); }
        string logs = captured.ToString();
        var lines = logs.Split('\n').Where(l => l.Contains("Telemetry export to the collector failed", StringComparison.Ordinal)).ToList();
        Assert.NotEmpty(lines);
        Assert.Contains("\"@l\":\"Warning\"", lines[0]);
        // At most one line per minute, however many exports failed.
        Assert.Single(lines);
    }
}
