using System.Text.Json.Nodes;
using System.Text.RegularExpressions;
using static PathService.Deploy.Tests.Repo;

namespace PathService.Deploy.Tests;

/// <summary>The alert rules, the dashboard and the autoscaling rule use series the server really exports.</summary>
[Collection(LiveServerCollection.Name)]
public class MetricNameTests(LiveServer server)
{
    /// <summary>Series Prometheus makes itself for every scrape target, not the server.</summary>
    private static readonly HashSet<string> PrometheusOwn = ["up"];
    /// <summary>Labels Prometheus attaches to scraped series (target and Kubernetes discovery).</summary>
    private static readonly HashSet<string> TargetLabels = ["job", "instance", "pod", "namespace", "le"];

    public static IEnumerable<(string Where, string Expr)> RuleExpressions() =>
        LoadYamlSingle("deploy/prometheus-rules.yaml")["groups"]!.AsArray()
            .SelectMany(g => g!["rules"]!.AsArray().Select(r => ($"rule {Str(r!["alert"])}", Str(r["expr"])!)));

    public static IEnumerable<(string Where, string Expr)> DashboardExpressions()
    {
        var d = JsonNode.Parse(File.ReadAllText(PathOf("deploy", "dashboard.json")))!;
        foreach (var p in d["panels"]!.AsArray())
            foreach (var t in p!["targets"]?.AsArray() ?? [])
                yield return ($"panel '{p["title"]}'", t!["expr"]!.GetValue<string>());
        foreach (var v in d["templating"]!["list"]!.AsArray().Where(v => v!["type"]!.GetValue<string>() == "query"))
            yield return ($"variable {v!["name"]}", Regex.Replace(v["query"]!.GetValue<string>(), @"label_values\(([^,]+),.*\)", "$1"));
    }

    /// <summary>Metric names of a PromQL expression: identifiers that are not functions, keywords, labels or durations.</summary>
    public static HashSet<string> MetricNames(string expr)
    {
        string s = Regex.Replace(expr, "\"(?:[^\"\\\\]|\\\\.)*\"", "\"\"");
        s = Regex.Replace(s, @"\{[^}]*\}", " ");
        s = Regex.Replace(s, @"\[[^\]]*\]", " ");
        s = Regex.Replace(s, @"\b(by|without|on|ignoring|group_left|group_right)\s*\([^)]*\)", " ");
        string[] keywords = ["and", "or", "unless", "bool", "offset", "inf", "nan", "by", "without"];
        return Regex.Matches(s, @"(?<![\w:.$])([a-zA-Z_:][a-zA-Z0-9_:]*)(?![a-zA-Z0-9_:])(?!\s*\()").Select(m => m.Groups[1].Value)
            .Where(n => !keywords.Contains(n)).ToHashSet();
    }

    private Dictionary<string, HashSet<string>> ExportedLabels()
    {
        var map = new Dictionary<string, HashSet<string>>();
        foreach (Match m in Regex.Matches(server.MetricsText, @"^([a-zA-Z_:][a-zA-Z0-9_:]*)\{([^}]*)\}", RegexOptions.Multiline))
        {
            if (!map.TryGetValue(m.Groups[1].Value, out var set)) map[m.Groups[1].Value] = set = [];
            foreach (Match l in Regex.Matches(m.Groups[2].Value, @"([a-zA-Z_]\w*)=")) set.Add(l.Groups[1].Value);
        }
        return map;
    }

    private void AssertExported(IEnumerable<(string Where, string Expr)> expressions)
    {
        var labels = ExportedLabels();
        int checkedNames = 0;
        foreach (var (where, expr) in expressions)
        {
            var names = MetricNames(expr);
            Assert.True(names.Count > 0, $"{where}: no metric in '{expr}'");
            foreach (var name in names.Where(n => !PrometheusOwn.Contains(n)))
            {
                Assert.True(server.SeriesNames.Contains(name), $"{where} uses {name}, which the server does not export");
                checkedNames++;
            }
            // Label names in matchers must exist on the series (or be added by Prometheus).
            foreach (Match sel in Regex.Matches(expr, @"([a-zA-Z_:][a-zA-Z0-9_:]*)\{([^}]*)\}"))
            {
                if (PrometheusOwn.Contains(sel.Groups[1].Value)) continue;
                foreach (Match l in Regex.Matches(sel.Groups[2].Value, @"([a-zA-Z_]\w*)\s*(=~|!~|!=|=)\s*""([^""]*)"""))
                {
                    string label = l.Groups[1].Value;
                    if (TargetLabels.Contains(label)) continue;
                    Assert.True(labels[sel.Groups[1].Value].Contains(label), $"{where}: {sel.Groups[1].Value} has no label {label}");
                    // Label values too: every value a matcher names (each alternative of a regex of plain names) is one the
                    // server writes, so a renamed status or enum label cannot leave a rule that never matches.
                    string value = l.Groups[3].Value;
                    if (value.Length == 0) continue; // "no such label", e.g. error_type="" for successful calls
                    var values = l.Groups[2].Value is "=" or "!=" ? [value]
                        : Regex.IsMatch(value, @"^[\w./]+(\|[\w./]+)*$") ? value.Split('|') : [];
                    foreach (var v in values)
                        Assert.True(server.MetricsText.Contains($"{label}=\"{v}\"", StringComparison.Ordinal), $"{where}: no series has {label}=\"{v}\"");
                }
            }
        }
        Assert.True(checkedNames > 0);
    }

    [Fact]
    public void The_metric_name_reader_finds_names_and_skips_functions_labels_and_numbers()
    {
        var names = MetricNames("sum by (le, rpc) (rate(a_total{rpc=\"x\",le=\"10\"}[5m])) / clamp_min(b_count offset 1h, 1e-9) > 0.5 and on(job) up");
        Assert.Equal(new HashSet<string> { "a_total", "b_count", "up" }, names);
    }

    [Fact]
    public void Every_metric_of_the_alert_rules_is_exported_by_the_server()
    {
        var rules = RuleExpressions().ToList();
        AssertExported(rules);
        // The rules cover what the brief of the service asks to watch.
        string all = string.Join("\n", rules.Select(r => r.Expr));
        foreach (var m in new[] { "pathservice_divergences_total", "pathservice_step_cuts_total", "http_server_request_duration_seconds_bucket",
                     "pathservice_analyses_active", "pathservice_analyses_failed_total" })
            Assert.Contains(m, all);
    }

    [Fact]
    public void Every_metric_of_the_dashboard_is_exported_by_the_server()
    {
        var exprs = DashboardExpressions().ToList();
        AssertExported(exprs);
        string all = string.Join("\n", exprs.Select(r => r.Expr));
        foreach (var m in new[] { "pathservice_analyses_started_total", "pathservice_analyses_active", "pathservice_step_iterations_bucket",
                     "pathservice_step_cuts_total", "pathservice_divergences_total", "pathservice_factorization_duration_seconds_sum",
                     "pathservice_critical_points_total", "pathservice_analysis_duration_seconds_bucket" })
            Assert.Contains(m, all);
    }

    [Fact]
    public void Dashboard_panels_have_unique_ids_and_fit_the_grid()
    {
        var d = JsonNode.Parse(File.ReadAllText(PathOf("deploy", "dashboard.json")))!;
        var panels = d["panels"]!.AsArray();
        Assert.Equal(panels.Count, panels.Select(p => p!["id"]!.GetValue<int>()).Distinct().Count());
        foreach (var p in panels)
        {
            var g = p!["gridPos"]!;
            Assert.True(g["x"]!.GetValue<int>() + g["w"]!.GetValue<int>() <= 24, $"panel {p["title"]} is wider than the grid");
        }
    }

    [Fact]
    public void The_autoscaling_adapter_rule_reads_an_exported_series()
    {
        var rule = Assert.Single(LoadYamlSingle("deploy/prometheus-adapter.yaml")["rules"]!.AsArray())!;
        foreach (var name in MetricNames(Str(rule["seriesQuery"])!)) Assert.Contains(name, server.SeriesNames);
    }
}
