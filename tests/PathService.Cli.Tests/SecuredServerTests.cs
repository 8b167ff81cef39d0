using System.Security.Cryptography;
using System.Security.Cryptography.X509Certificates;
using Google.Protobuf;
using Grpc.Core;
using Grpc.Core.Interceptors;
using Microsoft.Extensions.DependencyInjection;
using PathService.Cli.Backends;
using PathService.Cli.Output;
using PathService.Client.Calls;
using PathService.Contracts.V1;
using Xunit.Abstractions;

namespace PathService.Cli.Tests;

/// <summary>
/// pathtrace against secured and unhealthy servers, all real instances on loopback: API key by option and by
/// environment variable, a private CA for TLS, distinct exit codes for authentication, refusal by limits and
/// unavailability, retries that skip NOT_SERVING instances, and a restarted trace that must repeat what was received.
/// </summary>
public sealed class SecuredServerTests(ITestOutputHelper output) : IDisposable
{
    private const string Key = "cli-test-key-7f3a";
    private readonly string _dir = Directory.CreateTempSubdirectory("pathtrace-secured-").FullName;

    public void Dispose() => Directory.Delete(_dir, recursive: true);

    private string TrussFile()
    {
        string path = Path.Combine(_dir, "truss.json");
        File.WriteAllText(path, JsonFormatter.Default.Format(Models.TwoBarTruss()));
        return path;
    }

    private static string[] KeySettings => ["Security:ApiKeys:Keys:0:Name=ci", $"Security:ApiKeys:Keys:0:Key={Key}"];

    [Fact]
    public async Task An_api_key_by_option_or_environment_variable_is_accepted_and_a_missing_or_wrong_key_exits_6()
    {
        await using var server = await ServerInstance.StartAsync(slots: 2, KeySettings);
        string model = TrussFile();

        var none = await Pathtrace.RunAsync(_dir, "linear", model, "--server", server.GrpcUrl);
        Assert.True(none.Code == 6, $"exit {none.Code}: {none.Stderr}");
        Assert.Contains("authentication failed", none.Stderr);

        var wrong = await Pathtrace.RunAsync(_dir, "linear", model, "--server", server.GrpcUrl, "--api-key", "not-the-key");
        Assert.True(wrong.Code == 6, $"exit {wrong.Code}: {wrong.Stderr}");
        Assert.Contains("refused the API key", wrong.Stderr);

        var option = await Pathtrace.RunAsync(_dir, "linear", model, "--server", server.GrpcUrl, "--api-key", Key);
        Assert.True(option.Code == 0, $"exit {option.Code}: {option.Stderr}");
        Assert.Contains("bar-L", option.Stdout);

        var environment = await Pathtrace.RunWithEnvironmentAsync(_dir, new Dictionary<string, string> { ["PATHSERVICE_API_KEY"] = Key },
            "trace", model, "--server", server.GrpcUrl, "--quiet");
        Assert.True(environment.Code == 0, $"exit {environment.Code}: {environment.Stderr}");
    }

    [Fact]
    public async Task A_request_refused_by_the_servers_limits_exits_7_and_an_unreachable_server_still_exits_4()
    {
        // Three nodes against a limit of two.
        await using var server = await ServerInstance.StartAsync(slots: 1, ["Limits:MaxNodes=2"]);
        var refused = await Pathtrace.RunAsync(_dir, "trace", TrussFile(), "--server", server.GrpcUrl, "--quiet");
        Assert.True(refused.Code == 7, $"exit {refused.Code}: {refused.Stderr}");
        Assert.Contains("at most 2", refused.Stderr);

        await server.KillAsync();
        var gone = await Pathtrace.RunAsync(_dir, "linear", TrussFile(), "--server", server.GrpcUrl);
        Assert.True(gone.Code == 4, $"exit {gone.Code}: {gone.Stderr}");
    }

    [Fact]
    public async Task A_server_certificate_from_a_private_ca_is_trusted_with_ca_file_and_refused_without_it()
    {
        // A private CA and a server certificate it issued for 127.0.0.1, made here.
        using var caKey = RSA.Create(2048);
        var caRequest = new CertificateRequest("CN=PathService test CA", caKey, HashAlgorithmName.SHA256, RSASignaturePadding.Pkcs1);
        caRequest.CertificateExtensions.Add(new X509BasicConstraintsExtension(true, false, 0, true));
        caRequest.CertificateExtensions.Add(new X509KeyUsageExtension(X509KeyUsageFlags.KeyCertSign | X509KeyUsageFlags.CrlSign, true));
        using var ca = caRequest.CreateSelfSigned(DateTimeOffset.UtcNow.AddDays(-1), DateTimeOffset.UtcNow.AddDays(30));
        using var serverKey = RSA.Create(2048);
        var serverRequest = new CertificateRequest("CN=127.0.0.1", serverKey, HashAlgorithmName.SHA256, RSASignaturePadding.Pkcs1);
        var san = new SubjectAlternativeNameBuilder();
        san.AddIpAddress(System.Net.IPAddress.Loopback);
        san.AddDnsName("localhost");
        serverRequest.CertificateExtensions.Add(san.Build());
        serverRequest.CertificateExtensions.Add(new X509EnhancedKeyUsageExtension([new Oid("1.3.6.1.5.5.7.3.1")], false));
        using var issued = serverRequest.Create(ca, DateTimeOffset.UtcNow.AddDays(-1), DateTimeOffset.UtcNow.AddDays(10), [1, 2, 3, 4]);
        using var withKey = issued.CopyWithPrivateKey(serverKey);
        string pfx = Path.Combine(_dir, "server.pfx"), caPem = Path.Combine(_dir, "ca.pem");
        File.WriteAllBytes(pfx, withKey.Export(X509ContentType.Pkcs12));
        File.WriteAllText(caPem, ca.ExportCertificatePem());

        await using var server = await ServerInstance.StartAsync(slots: 1, [$"Security:Tls:CertificatePath={pfx}", .. KeySettings]);
        Assert.StartsWith("https://", server.GrpcUrl);
        string model = TrussFile();

        var trusted = await Pathtrace.RunAsync(_dir, "linear", model, "--server", server.GrpcUrl, "--ca-file", caPem, "--api-key", Key);
        Assert.True(trusted.Code == 0, $"exit {trusted.Code}: {trusted.Stderr}");

        var untrusted = await Pathtrace.RunAsync(_dir, "linear", model, "--server", server.GrpcUrl, "--api-key", Key);
        Assert.True(untrusted.Code == 4, $"exit {untrusted.Code}: {untrusted.Stderr}");
        Assert.Contains("--ca-file", untrusted.Stderr);

        // A CA that did not issue the certificate is not enough.
        using var otherKey = RSA.Create(2048);
        using var other = new CertificateRequest("CN=another CA", otherKey, HashAlgorithmName.SHA256, RSASignaturePadding.Pkcs1)
            .CreateSelfSigned(DateTimeOffset.UtcNow.AddDays(-1), DateTimeOffset.UtcNow.AddDays(30));
        string otherPem = Path.Combine(_dir, "other.pem");
        File.WriteAllText(otherPem, other.ExportCertificatePem());
        var wrongCa = await Pathtrace.RunAsync(_dir, "linear", model, "--server", server.GrpcUrl, "--ca-file", otherPem, "--api-key", Key);
        Assert.True(wrongCa.Code == 4, $"exit {wrongCa.Code}: {wrongCa.Stderr}");

        var missing = await Pathtrace.RunAsync(_dir, "linear", model, "--server", server.GrpcUrl, "--ca-file", Path.Combine(_dir, "absent.pem"));
        Assert.True(missing.Code == 2, $"exit {missing.Code}: {missing.Stderr}");
    }

    [Fact]
    public async Task A_retry_skips_instances_whose_health_reports_not_serving()
    {
        var servers = new List<ServerInstance>();
        try
        {
            for (int i = 0; i < 3; i++) servers.Add(await ServerInstance.StartAsync(slots: 2));
            // The first two drain (as during a rolling update): NOT_SERVING, new analyses UNAVAILABLE.
            await servers[0].DrainAsync();
            await servers[1].DrainAsync();
            await using var backend = new GrpcBackend(string.Join(",", servers.Select(s => s.GrpcUrl)));
            // The balancer (Grpc.Net.Client's round-robin) starts at a random instance: if it is a draining one, the
            // call meets UNAVAILABLE, the retry asks every instance's health, skips both NOT_SERVING ones and runs on
            // the third. Either way the trace runs once on the third, and no draining instance is tried twice.
            var rec = await Traces.RecordAsync(backend, Models.TwoBarTruss());
            Assert.True(rec.Summary?.Completed, "the trace did not complete");
            Assert.Equal(1, servers[2].TraceCalls);
            Assert.True(servers[0].TraceCalls + servers[1].TraceCalls <= 1, $"calls per instance: {string.Join(", ", servers.Select(s => s.TraceCalls))}");
        }
        finally
        {
            foreach (var s in servers) await s.DisposeAsync();
        }
    }

    /// <summary>A faulty instance: every point it streams has its load factor one unit in the last place higher.</summary>
    private sealed class OffByOneUlp : Interceptor
    {
        public override Task ServerStreamingServerHandler<TRequest, TResponse>(TRequest request, IServerStreamWriter<TResponse> responseStream,
            ServerCallContext context, ServerStreamingServerMethod<TRequest, TResponse> continuation) =>
            continuation(request, new Writer<TResponse>(responseStream), context);

        private sealed class Writer<T>(IServerStreamWriter<T> inner) : IServerStreamWriter<T>
        {
            public WriteOptions? WriteOptions { get => inner.WriteOptions; set => inner.WriteOptions = value; }
            public Task WriteAsync(T message) => WriteAsync(message, CancellationToken.None);

            public Task WriteAsync(T message, CancellationToken cancellationToken)
            {
                if (message is TracePathResponse { UpdateCase: TracePathResponse.UpdateOneofCase.Point } r)
                    r.Point.LoadFactor = Math.BitIncrement(r.Point.LoadFactor);
                return inner.WriteAsync(message, cancellationToken);
            }
        }
    }

    [Fact]
    public async Task A_restarted_trace_that_differs_from_the_points_received_fails_loudly()
    {
        await using var honest = await ServerInstance.StartAsync(slots: 2);
        await using var faulty = await ServerInstance.StartAsync(slots: 2, customize: b =>
            b.Services.Configure<Grpc.AspNetCore.Server.GrpcServiceOptions>(o => o.Interceptors.Add<OffByOneUlp>()));
        await using var backend = new GrpcBackend($"{honest.GrpcUrl},{faulty.GrpcUrl}");
        // Full state on every point: flow control keeps the server close behind the client.
        var request = Models.LatticeCap(cells: 8, points: 150);
        var rec = new PathRecorder();
        // The balancer starts at a random instance; whichever streams the trace is killed at point 10, and the other
        // one's replay differs from it by one unit in the last place of every load factor.
        ServerInstance? killed = null;
        var ex = await Assert.ThrowsAsync<ReplayMismatchException>(async () =>
        {
            await foreach (var r in backend.TraceAsync(request, CancellationToken.None))
            {
                rec.Add(r);
                if (killed is null && r.UpdateCase == TracePathResponse.UpdateOneofCase.Point && r.Point.Index == 10)
                {
                    killed = honest.ActiveAnalyses > 0 ? honest : faulty;
                    await killed.KillAsync();
                }
            }
        });
        output.WriteLine(ex.Message);
        Assert.Equal(1, (killed == honest ? faulty : honest).TraceCalls);
        // The first replayed point already differs, by one unit in the last place of λ; nothing of the restarted stream was passed on.
        Assert.Contains("point 0: load factor", ex.Message);
        // Points already in flight when the instance was killed may still arrive (a few more than 10 under load);
        // what matters is that they are the first stream's, each once and in order.
        var received = rec.Points.Select(p => p.Index).ToList();
        Assert.True(received.Count >= 11, $"only {received.Count} points before the restart");
        Assert.Equal(Enumerable.Range(0, received.Count), received);
    }
}
