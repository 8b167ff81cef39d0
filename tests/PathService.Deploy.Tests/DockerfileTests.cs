using System.Diagnostics;
using System.Net;
using System.Net.Sockets;
using System.Text.RegularExpressions;
using PathService.Server.Configuration;
using PathService.Server.Hosting;
using static PathService.Deploy.Tests.Repo;

namespace PathService.Deploy.Tests;

/// <summary>
/// No container engine runs where these tests run, so the Dockerfile is checked by reading it and by replaying its
/// build stage: its COPY instructions into an empty folder, its RUN commands there, then the runtime stage's command
/// with the runtime stage's environment, and its HEALTHCHECK command against that server.
/// </summary>
public class DockerfileTests
{
    public sealed record Instruction(string Stage, string Keyword, string Args);

    public static List<Instruction> Instructions()
    {
        var text = Regex.Replace(File.ReadAllText(PathOf("Dockerfile")), @"\\\r?\n", " ");
        var list = new List<Instruction>();
        string stage = "";
        foreach (var raw in text.Split('\n'))
        {
            var line = raw.Trim();
            if (line.Length == 0 || line.StartsWith('#')) continue;
            int sp = line.IndexOf(' ');
            string kw = (sp < 0 ? line : line[..sp]).ToUpperInvariant(), args = sp < 0 ? "" : line[(sp + 1)..].Trim();
            if (kw == "FROM") stage = Regex.Match(args, @"\bAS\s+(\S+)", RegexOptions.IgnoreCase).Groups[1].Value;
            list.Add(new Instruction(stage, kw, args));
        }
        return list;
    }

    private static Instruction Runtime(string kw) => Assert.Single(Instructions(), i => i.Stage == "runtime" && i.Keyword == kw);

    public static int RuntimeUser() => int.Parse(Runtime("USER").Args.Split(':')[0]);

    /// <summary>The ENV of the runtime stage (KEY=VALUE pairs; an empty value is allowed).</summary>
    public static Dictionary<string, string> RuntimeEnv() =>
        Instructions().Where(i => i.Stage == "runtime" && i.Keyword == "ENV")
            .SelectMany(i => Regex.Matches(i.Args, @"(\S+?)=(\S*)").Select(m => KeyValuePair.Create(m.Groups[1].Value, m.Groups[2].Value)))
            .ToDictionary();

    private static string[] ExecForm(string args) =>
        Regex.Matches(args, "\"([^\"]*)\"").Select(m => m.Groups[1].Value).ToArray();

    private static readonly PathServiceOptions Shipped = LiveServer.Options();

    [Fact]
    public void Build_and_runtime_stages_come_from_the_dotnet_sdk_and_aspnet_images()
    {
        var froms = Instructions().Where(i => i.Keyword == "FROM").ToList();
        Assert.Equal(2, froms.Count);
        Assert.Matches(@"^mcr\.microsoft\.com/dotnet/sdk:\S+ AS build$", froms[0].Args);
        Assert.Matches(@"^mcr\.microsoft\.com/dotnet/aspnet:\S+ AS runtime$", froms[1].Args);
        Assert.Contains(Instructions(), i => i.Keyword == "ARG" && i.Args == "DOTNET_VERSION=10.0");
    }

    [Fact]
    public void Exposed_ports_and_environment_are_the_servers_configuration()
    {
        var exposed = Runtime("EXPOSE").Args.Split(' ', StringSplitOptions.RemoveEmptyEntries).Select(int.Parse).ToHashSet();
        Assert.Equal(new HashSet<int> { Shipped.GrpcPort, Shipped.HttpPort }, exposed);
        var env = RuntimeEnv();
        Assert.Equal(Shipped.GrpcPort.ToString(), env["PathService__GrpcPort"]);
        Assert.Equal(Shipped.HttpPort.ToString(), env["PathService__HttpPort"]);
        Assert.Equal(Shipped.Telemetry.PrometheusPath, env["PathService__Telemetry__PrometheusPath"]);
        Assert.Equal("", env["ASPNETCORE_HTTP_PORTS"]);
    }

    [Fact]
    public void Runtime_stage_runs_as_a_numeric_non_root_user_and_checks_health_over_grpc()
    {
        Assert.True(RuntimeUser() > 0);
        var health = Runtime("HEALTHCHECK").Args;
        var cmd = ExecForm(health[health.IndexOf("CMD", StringComparison.Ordinal)..]);
        Assert.Equal("dotnet", cmd[0]);
        Assert.Equal("/app/probe/pathservice-probe.dll", cmd[1]);
        Assert.Equal(ServerHost.HealthServiceName, cmd[Array.IndexOf(cmd, "--service") + 1]);
        Assert.Equal(["dotnet", "/app/server/PathService.Server.dll"], ExecForm(Runtime("ENTRYPOINT").Args));
    }

    [Fact]
    public void Every_path_the_build_stage_copies_exists_and_is_not_ignored()
    {
        var ignore = File.ReadAllLines(PathOf(".dockerignore")).Select(l => l.Trim()).Where(l => l.Length > 0 && !l.StartsWith('#')).ToList();
        Assert.Contains("**/bin/", ignore);
        Assert.Contains("**/obj/", ignore);
        foreach (var copy in Instructions().Where(i => i.Keyword == "COPY" && !i.Args.StartsWith("--from")))
        {
            var parts = copy.Args.Split(' ', StringSplitOptions.RemoveEmptyEntries);
            foreach (var src in parts[..^1])
            {
                Assert.True(File.Exists(PathOf(src.TrimEnd('/'))) || Directory.Exists(PathOf(src.TrimEnd('/'))), $"COPY {src}: not in the repository");
                string top = src.TrimEnd('/').Split('/')[0];
                Assert.DoesNotContain(ignore, p => p.TrimEnd('/') == top || p == src);
            }
        }
    }

    /// <summary>
    /// Replays the build stage in an empty folder (COPY = copy from the repository, RUN = bash, /app = a temp folder),
    /// then starts the published server the way ENTRYPOINT does, with the runtime ENV, and runs the HEALTHCHECK command.
    /// </summary>
    [Fact]
    public async Task Replayed_build_stage_publishes_a_server_that_the_healthcheck_reports_healthy()
    {
        string work = Directory.CreateTempSubdirectory("pathservice-docker-").FullName, src = Path.Combine(work, "src"), app = Path.Combine(work, "app");
        Directory.CreateDirectory(src);
        try
        {
            foreach (var i in Instructions().Where(i => i.Stage == "build"))
            {
                if (i.Keyword == "COPY")
                {
                    var parts = i.Args.Split(' ', StringSplitOptions.RemoveEmptyEntries);
                    string dest = Path.Combine(src, parts[^1]);
                    foreach (var s in parts[..^1]) CopyIn(PathOf(s.TrimEnd('/')), dest);
                }
                else if (i.Keyword == "RUN")
                {
                    var (code, output) = await RunAsync("bash", ["-c", i.Args.Replace("/app/", app + "/")], src, [], TimeSpan.FromMinutes(6));
                    Assert.True(code == 0, $"RUN {i.Args}\n{output}");
                }
            }
            foreach (var i in Instructions().Where(i => i.Stage == "runtime" && i.Keyword == "COPY"))
            {
                string from = i.Args.Split(' ', StringSplitOptions.RemoveEmptyEntries)[1];
                Assert.True(Directory.Exists(from.Replace("/app/", app + "/").TrimEnd('/')), $"{i.Args}: the build stage made no {from}");
            }
            Assert.True(File.Exists(Path.Combine(app, "server", "appsettings.json")));

            // ENTRYPOINT with the image's environment; only the listen address and ports differ (loopback, free ports).
            var env = RuntimeEnv();
            env["PathService__ListenAddress"] = "127.0.0.1";
            env["PathService__GrpcPort"] = FreePort().ToString();
            env["PathService__HttpPort"] = FreePort().ToString();
            var entry = ExecForm(Runtime("ENTRYPOINT").Args);
            using var serverProcess = Start(entry[0], entry[1..].Select(a => a.Replace("/app/", app + "/")).ToArray(), work, env);
            try
            {
                var health = Runtime("HEALTHCHECK").Args;
                var cmd = ExecForm(health[health.IndexOf("CMD", StringComparison.Ordinal)..]).Select(a => a.Replace("/app/", app + "/")).ToArray();
                int code = -1;
                string output = "";
                for (var until = DateTime.UtcNow.AddSeconds(30); DateTime.UtcNow < until && code != 0; await Task.Delay(300))
                    (code, output) = await RunAsync(cmd[0], cmd[1..], work, env, TimeSpan.FromSeconds(20));
                Assert.True(code == 0, $"HEALTHCHECK failed: {output}");
                Assert.Contains("Serving", output);
                using var http = new HttpClient();
                string metrics = await http.GetStringAsync($"http://127.0.0.1:{env["PathService__HttpPort"]}{env["PathService__Telemetry__PrometheusPath"]}");
                Assert.Contains("target_info", metrics);
            }
            finally
            {
                serverProcess.Kill(entireProcessTree: true);
                await serverProcess.WaitForExitAsync();
            }
            // Against a stopped server the same command reports unhealthy.
            var probe = ExecForm(Runtime("HEALTHCHECK").Args[Runtime("HEALTHCHECK").Args.IndexOf("CMD", StringComparison.Ordinal)..]).Select(a => a.Replace("/app/", app + "/")).ToArray();
            var (down, _) = await RunAsync(probe[0], probe[1..], work, env, TimeSpan.FromSeconds(20));
            Assert.Equal(1, down);
        }
        finally
        {
            try { Directory.Delete(work, recursive: true); } catch (IOException) { }
        }
    }

    private static void CopyIn(string from, string dest)
    {
        if (File.Exists(from))
        {
            string target = dest.EndsWith('/') || Directory.Exists(dest) ? Path.Combine(dest, Path.GetFileName(from)) : dest;
            Directory.CreateDirectory(Path.GetDirectoryName(target)!);
            File.Copy(from, target, overwrite: true);
            return;
        }
        // A directory: its content, without build output (as .dockerignore leaves it out).
        foreach (var file in Directory.EnumerateFiles(from, "*", SearchOption.AllDirectories))
        {
            string rel = Path.GetRelativePath(from, file);
            if (rel.Split(Path.DirectorySeparatorChar).Any(p => p is "bin" or "obj")) continue;
            string target = Path.Combine(dest, rel);
            Directory.CreateDirectory(Path.GetDirectoryName(target)!);
            File.Copy(file, target, overwrite: true);
        }
    }

    private static int FreePort()
    {
        using var l = new TcpListener(IPAddress.Loopback, 0);
        l.Start();
        return ((IPEndPoint)l.LocalEndpoint).Port;
    }

    private static Process Start(string file, string[] args, string dir, Dictionary<string, string> env)
    {
        var psi = new ProcessStartInfo(file) { WorkingDirectory = dir, RedirectStandardOutput = true, RedirectStandardError = true, UseShellExecute = false };
        foreach (var a in args) psi.ArgumentList.Add(a);
        // The test host's MSBuild variables would steer a nested build; the image has none of them.
        foreach (var key in psi.Environment.Keys.Where(k => k.StartsWith("MSBuild", StringComparison.OrdinalIgnoreCase) || k.StartsWith("MSBUILD")).ToList())
            psi.Environment.Remove(key);
        foreach (var (k, v) in env) psi.Environment[k] = v;
        var p = Process.Start(psi)!;
        p.OutputDataReceived += (_, _) => { };
        p.ErrorDataReceived += (_, _) => { };
        p.BeginOutputReadLine();
        p.BeginErrorReadLine();
        return p;
    }

    private static async Task<(int Code, string Output)> RunAsync(string file, string[] args, string dir, Dictionary<string, string> env, TimeSpan timeout)
    {
        var psi = new ProcessStartInfo(file) { WorkingDirectory = dir, RedirectStandardOutput = true, RedirectStandardError = true, UseShellExecute = false };
        foreach (var a in args) psi.ArgumentList.Add(a);
        foreach (var key in psi.Environment.Keys.Where(k => k.StartsWith("MSBuild", StringComparison.OrdinalIgnoreCase)).ToList())
            psi.Environment.Remove(key);
        foreach (var (k, v) in env) psi.Environment[k] = v;
        using var p = Process.Start(psi)!;
        var stdout = p.StandardOutput.ReadToEndAsync();
        var stderr = p.StandardError.ReadToEndAsync();
        using var cts = new CancellationTokenSource(timeout);
        try { await p.WaitForExitAsync(cts.Token); }
        catch (OperationCanceledException) { p.Kill(entireProcessTree: true); return (-1, "timed out\n" + await stdout + await stderr); }
        return (p.ExitCode, await stdout + await stderr);
    }
}
