using System.Diagnostics;
using System.Text.Json;
using PathService.Server.Configuration;
using PathService.Server.Hosting;
using PathService.Server.Tests.Fixtures;

namespace PathService.Server.Tests;

/// <summary>
/// Bad settings are refused at start, each named, with one JSON log line per problem and exit code 78; nothing is
/// clamped silently; a TLS file that does not load is such a problem, not a plain-text stack; API keys over cleartext
/// on a non-loopback address are refused unless explicitly allowed. The process tests run the built server.
/// </summary>
[Collection(ServerCollection.Name)] // one after another with the other server tests: three child processes starting at once would skew their timings
public sealed class ConfigurationTests
{
    private static string ServerDll()
    {
        var dir = new DirectoryInfo(AppContext.BaseDirectory);
        while (dir is not null && !File.Exists(Path.Combine(dir.FullName, "PathService.sln"))) dir = dir.Parent;
        Assert.NotNull(dir);
        string dll = Path.Combine(dir!.FullName, "src", "PathService.Server", "bin", "Release", "net10.0", "PathService.Server.dll");
        if (!File.Exists(dll)) dll = Path.Combine(AppContext.BaseDirectory, "PathService.Server.dll");
        return dll;
    }

    private static async Task<(int ExitCode, string StdOut, string StdErr)> RunServerAsync(params string[] settings)
    {
        string dll = ServerDll();
        var psi = new ProcessStartInfo("dotnet")
        {
            WorkingDirectory = Path.GetDirectoryName(dll)!, RedirectStandardOutput = true, RedirectStandardError = true, UseShellExecute = false,
        };
        psi.ArgumentList.Add(dll);
        foreach (var a in new[] { "--PathService:GrpcPort=0", "--PathService:HttpPort=0" }.Concat(settings)) psi.ArgumentList.Add(a);
        using var p = Process.Start(psi)!;
        var stdout = p.StandardOutput.ReadToEndAsync();
        var stderr = p.StandardError.ReadToEndAsync();
        using var timeout = new CancellationTokenSource(TimeSpan.FromSeconds(60));
        try { await p.WaitForExitAsync(timeout.Token); }
        catch (OperationCanceledException)
        {
            p.Kill(entireProcessTree: true);
            throw new Xunit.Sdk.XunitException("the server did not exit: the bad configuration was accepted");
        }
        return (p.ExitCode, await stdout, await stderr);
    }

    private static List<JsonElement> JsonLines(string stdout) =>
        stdout.Split('\n', StringSplitOptions.RemoveEmptyEntries | StringSplitOptions.TrimEntries)
            .Select(l => JsonDocument.Parse(l).RootElement.Clone()).ToList(); // every line is JSON, or this throws

    [Fact]
    public async Task Bad_limits_end_the_process_with_exit_code_78_and_one_json_line_per_problem()
    {
        var (code, stdout, stderr) = await RunServerAsync(
            "--PathService:Limits:MaxNodes=-5", "--PathService:Limits:MaxConcurrentAnalyses=0", "--PathService:Limits:RetryAfterSeconds=NaN");
        Assert.Equal(ConfigurationRefusedException.ExitCode, code);
        var lines = JsonLines(stdout);
        var problems = lines.Where(l => l.TryGetProperty("Problem", out _)).Select(l => l.GetProperty("Problem").GetString()!).ToList();
        Assert.All(lines, l => Assert.Equal("Fatal", l.GetProperty("@l").GetString()));
        Assert.Contains(problems, p => p.StartsWith("PathService:Limits:MaxNodes is -5", StringComparison.Ordinal));
        Assert.Contains(problems, p => p.StartsWith("PathService:Limits:MaxConcurrentAnalyses is 0", StringComparison.Ordinal));
        Assert.Contains(problems, p => p.StartsWith("PathService:Limits:RetryAfterSeconds is NaN", StringComparison.Ordinal));
        Assert.DoesNotContain("   at ", stdout + stderr);
    }

    [Fact]
    public async Task A_tls_certificate_that_does_not_load_is_a_json_refusal_not_a_stack()
    {
        string garbage = Path.Combine(Path.GetTempPath(), $"pathservice-bad-{Guid.NewGuid():N}.pfx");
        await File.WriteAllBytesAsync(garbage, [1, 2, 3, 4, 5]);
        try
        {
            var (code, stdout, stderr) = await RunServerAsync($"--PathService:Security:Tls:CertificatePath={garbage}");
            Assert.Equal(ConfigurationRefusedException.ExitCode, code);
            var problem = Assert.Single(JsonLines(stdout), l => l.TryGetProperty("Problem", out _)).GetProperty("Problem").GetString()!;
            Assert.StartsWith("PathService:Security:Tls:CertificatePath", problem);
            Assert.Contains("could not be loaded", problem);
            Assert.DoesNotContain("   at ", stdout + stderr);
            Assert.Equal("", stderr.Trim());
        }
        finally { File.Delete(garbage); }
    }

    [Fact]
    public async Task Api_keys_over_cleartext_on_every_interface_are_refused()
    {
        var (code, stdout, _) = await RunServerAsync("--PathService:ListenAddress=0.0.0.0", "--PathService:Security:ApiKeys:Keys:0:Key=cleartext-key-0001");
        Assert.Equal(ConfigurationRefusedException.ExitCode, code);
        Assert.Contains("AllowKeysOverCleartext", stdout);
        Assert.DoesNotContain("cleartext-key-0001", stdout);
    }

    [Fact]
    public void Api_keys_over_cleartext_are_accepted_on_loopback_or_when_explicitly_allowed()
    {
        static List<string> Problems(params string[] args)
        {
            var o = new PathServiceOptions();
            o.Security.ApiKeys.Keys.Add(new ApiKeyEntry { Name = "a", Key = "some-key-000000001" });
            foreach (var a in args)
            {
                if (a == "loopback") o.ListenAddress = "127.0.0.1";
                if (a == "allow") o.Security.AllowKeysOverCleartext = true;
            }
            return OptionsValidation.Problems(o, out _);
        }
        Assert.Single(Problems());
        Assert.Empty(Problems("loopback"));
        Assert.Empty(Problems("allow"));
    }

    [Fact]
    public void Every_bad_setting_is_named_at_once_and_the_defaults_are_valid()
    {
        Assert.Empty(OptionsValidation.Problems(new PathServiceOptions(), out _));
        var ex = Assert.Throws<ConfigurationRefusedException>(() => ServerHost.Build(
        [
            "--PathService:ListenAddress=not-an-ip", "--PathService:GrpcPort=70000", "--PathService:HttpPort=-2", "--PathService:Limits:MaxSprings=-1",
            "--PathService:Limits:MaxRequestBytes=10", "--PathService:Limits:QueueTimeoutSeconds=-1", "--PathService:Shutdown:GraceSeconds=-3",
            "--PathService:Telemetry:OtlpEndpoint=collector:4317", "--PathService:Telemetry:PrometheusPath=metrics",
            "--PathService:Security:ApiKeys:Keys:0:Name=x", "--PathService:Security:ApiKeys:Keys:0:KeySha256=abc",
            "--PathService:Security:ApiKeys:Keys:1:Name=x", "--PathService:Security:ApiKeys:Keys:1:Key=k-0123456789",
        ]));
        string[] keys =
        [
            "ListenAddress", "GrpcPort", "HttpPort", "Limits:MaxSprings", "Limits:MaxRequestBytes", "Limits:QueueTimeoutSeconds", "Shutdown:GraceSeconds",
            "Telemetry:OtlpEndpoint", "Telemetry:PrometheusPath", "Security:ApiKeys:Keys:0:KeySha256", "Security:ApiKeys:Keys:",
        ];
        foreach (var k in keys) Assert.Contains(ex.Problems, p => p.StartsWith("PathService:" + k, StringComparison.Ordinal));
    }

    [Fact]
    public void The_retired_port_key_is_refused_with_its_new_name_rather_than_ignored()
    {
        // An old manifest's PathService__Port would otherwise leave the server on the default gRPC port.
        var ex = Assert.Throws<ConfigurationRefusedException>(() => ServerHost.Build(
            ["--PathService:ListenAddress=127.0.0.1", "--PathService:Port=6000", "--PathService:GrpcPort=0", "--PathService:HttpPort=-1"]));
        var problem = Assert.Single(ex.Problems);
        Assert.StartsWith("PathService:Port is no longer read", problem);
        Assert.Contains("PathService:GrpcPort", problem);
        Assert.Contains("PathService__GrpcPort", problem);
    }
}
