using System.Net;
using System.Security.Cryptography;
using System.Security.Cryptography.X509Certificates;
using Google.Rpc;
using Grpc.Core;
using Grpc.Health.V1;
using PathService.Contracts.V1;
using PathService.Server.Security;
using PathService.Server.Tests.Fixtures;
using StatusCode = Grpc.Core.StatusCode;

namespace PathService.Server.Tests;

/// <summary>API keys, per-caller limits, open health and metrics, TLS with a certificate from configuration.</summary>
[Collection(ServerCollection.Name)]
public sealed class SecurityTests : IAsyncLifetime
{
    private const string AliceKey = "alice-test-key-4c1d";
    private const string BobKey = "bob-test-key-77e0";
    private TestServer _server = null!;

    public async Task InitializeAsync() => _server = await TestServer.StartAsync(
    [
        "Security:ApiKeys:Keys:0:Name=alice", $"Security:ApiKeys:Keys:0:Key={AliceKey}", "Security:ApiKeys:Keys:0:MaxConcurrentAnalyses=1",
        // Bob's key is configured by its digest only.
        "Security:ApiKeys:Keys:1:Name=bob", $"Security:ApiKeys:Keys:1:KeySha256={Convert.ToHexString(ApiKeyAuthenticator.Digest(BobKey))}",
        "Limits:MaxConcurrentAnalyses=4",
    ]);

    public async Task DisposeAsync() => await _server.DisposeAsync();

    private static Metadata Key(string key) => new() { { "x-api-key", key } };

    private static CheckModelRequest Check() => new() { Model = DemoStructures.TwoBarTruss(), LoadCase = DemoStructures.ApexLoad() };

    [Fact]
    public async Task A_call_without_a_key_is_unauthenticated()
    {
        var ex = await Assert.ThrowsAsync<RpcException>(() => _server.Client.CheckModelAsync(Check()).ResponseAsync);
        Assert.Equal(StatusCode.Unauthenticated, ex.StatusCode);
        var trace = await Assert.ThrowsAsync<RpcException>(() => Requests.ReadAllAsync(_server.Client.TracePath(Requests.Truss())));
        Assert.Equal(StatusCode.Unauthenticated, trace.StatusCode);
    }

    [Fact]
    public async Task A_wrong_key_is_permission_denied()
    {
        var ex = await Assert.ThrowsAsync<RpcException>(() => _server.Client.CheckModelAsync(Check(), Key("not-a-key")).ResponseAsync);
        Assert.Equal(StatusCode.PermissionDenied, ex.StatusCode);
        Assert.DoesNotContain("not-a-key", ex.Status.Detail);
    }

    [Fact]
    public async Task Known_keys_are_accepted_whether_given_plain_or_as_a_digest()
    {
        Assert.True((await _server.Client.CheckModelAsync(Check(), Key(AliceKey))).Valid);
        Assert.True((await _server.Client.CheckModelAsync(Check(), Key(BobKey))).Valid);
        var messages = await Requests.ReadAllAsync(_server.Client.TracePath(Requests.Truss(), Key(BobKey)));
        Assert.NotNull(messages[^1].Summary);
    }

    [Fact]
    public async Task Health_and_metrics_need_no_key()
    {
        var health = new Health.HealthClient(_server.Channel);
        Assert.Equal(HealthCheckResponse.Types.ServingStatus.Serving, (await health.CheckAsync(new HealthCheckRequest())).Status);
        using var http = new HttpClient { BaseAddress = new Uri(_server.HttpUrl) };
        Assert.Equal(HttpStatusCode.OK, (await http.GetAsync("/healthz")).StatusCode);
        Assert.Equal(HttpStatusCode.OK, (await http.GetAsync("/metrics")).StatusCode);
    }

    [Fact]
    public async Task Json_transcoding_is_authenticated_too()
    {
        using var http = new HttpClient { BaseAddress = new Uri(_server.HttpUrl) };
        string json = Google.Protobuf.JsonFormatter.Default.Format(Check());
        using var anonymous = await http.PostAsync("/v1/models:check", new StringContent(json, System.Text.Encoding.UTF8, "application/json"));
        Assert.Equal(HttpStatusCode.Unauthorized, anonymous.StatusCode);
        using var request = new HttpRequestMessage(HttpMethod.Post, "/v1/models:check") { Content = new StringContent(json, System.Text.Encoding.UTF8, "application/json") };
        request.Headers.Add("x-api-key", AliceKey);
        using var ok = await http.SendAsync(request);
        Assert.Equal(HttpStatusCode.OK, ok.StatusCode);
    }

    [Fact]
    public async Task A_caller_at_its_own_limit_is_turned_away_while_others_still_run()
    {
        using var cts = new CancellationTokenSource();
        using var first = _server.Client.TracePath(Requests.LongTrace(), Key(AliceKey), cancellationToken: cts.Token);
        try
        {
            Assert.True(await first.ResponseStream.MoveNext());
            var ex = await Assert.ThrowsAsync<RpcException>(() => Requests.ReadAllAsync(_server.Client.TracePath(Requests.Truss(), Key(AliceKey))));
            Assert.Equal(StatusCode.ResourceExhausted, ex.StatusCode);
            var status = ex.GetRpcStatus()!;
            Assert.Equal("caller:alice", status.GetDetail<QuotaFailure>()!.Violations[0].Subject);
            Assert.NotNull(status.GetDetail<RetryInfo>());
            // Bob is not affected by Alice's limit.
            var messages = await Requests.ReadAllAsync(_server.Client.TracePath(Requests.Truss(), Key(BobKey)));
            Assert.NotNull(messages[^1].Summary);
        }
        finally
        {
            cts.Cancel();
            Assert.True(await _server.WaitForIdleAsync(TimeSpan.FromSeconds(5)));
        }
    }

    [Fact]
    public async Task Logs_contain_neither_keys_nor_model_contents()
    {
        await using var verbose = await TestServer.StartAsync(
        [
            "Security:ApiKeys:Keys:0:Name=carol", "Security:ApiKeys:Keys:0:Key=carol-secret-9f2a",
            "--Serilog:MinimumLevel:Default=Debug", "--Serilog:MinimumLevel:Override:Microsoft.AspNetCore=Debug", "--Serilog:MinimumLevel:Override:Grpc=Debug",
        ]);
        var original = Console.Out;
        var captured = new StringWriter();
        Console.SetOut(TextWriter.Synchronized(captured));
        try
        {
            var request = Requests.Truss();
            request.Model.Nodes[1].Id = "apex-node-secret-id";
            foreach (var b in request.Model.Bars) b.EndNode = b.EndNode == "apex" ? "apex-node-secret-id" : b.EndNode;
            foreach (var b in request.Model.Bars) b.StartNode = b.StartNode == "apex" ? "apex-node-secret-id" : b.StartNode;
            foreach (var s in request.Model.Supports) s.Node = s.Node == "apex" ? "apex-node-secret-id" : s.Node;
            request.LoadCase.Reference[0].Node = "apex-node-secret-id";
            request.Controls.TargetDisplacementDof.Node = "apex-node-secret-id";
            request.Controls.Monitored[0].Node = "apex-node-secret-id";
            await Requests.ReadAllAsync(verbose.Client.TracePath(request, Key("carol-secret-9f2a")));
            await Assert.ThrowsAsync<RpcException>(() => verbose.Client.CheckModelAsync(Check(), Key("wrong-secret-0b7c")).ResponseAsync);
            await Assert.ThrowsAsync<RpcException>(() => verbose.Client.CheckModelAsync(Check()).ResponseAsync);
            await Task.Delay(200);
        }
        finally { Console.SetOut(original); }
        string logs = captured.ToString();
        Assert.Contains("carol", logs); // the caller's name is logged, so the capture did see the server's logs
        Assert.DoesNotContain("carol-secret-9f2a", logs);
        Assert.DoesNotContain("wrong-secret-0b7c", logs);
        Assert.DoesNotContain("apex-node-secret-id", logs);
    }

    [Fact]
    public async Task Tls_with_a_certificate_from_configuration_works()
    {
        using var rsa = RSA.Create(2048);
        var request = new CertificateRequest("CN=pathservice-test", rsa, HashAlgorithmName.SHA256, RSASignaturePadding.Pkcs1);
        var san = new SubjectAlternativeNameBuilder();
        san.AddIpAddress(IPAddress.Loopback);
        san.AddDnsName("localhost");
        request.CertificateExtensions.Add(san.Build());
        request.CertificateExtensions.Add(new X509EnhancedKeyUsageExtension([new Oid("1.3.6.1.5.5.7.3.1")], false));
        using var certificate = request.CreateSelfSigned(DateTimeOffset.UtcNow.AddMinutes(-5), DateTimeOffset.UtcNow.AddDays(1));
        string path = Path.Combine(Path.GetTempPath(), $"pathservice-test-{Guid.NewGuid():N}.pfx");
        const string password = "test-only-password";
        await File.WriteAllBytesAsync(path, certificate.Export(X509ContentType.Pfx, password));
        try
        {
            await using var tls = await TestServer.StartAsync(
                ["Security:Tls:CertificatePath=" + path, "Security:Tls:CertificatePassword=" + password], certificate);
            Assert.StartsWith("https://", tls.GrpcUrl);
            Assert.True((await tls.Client.CheckModelAsync(Check())).Valid);
            var messages = await Requests.ReadAllAsync(tls.Client.TracePath(Requests.Truss()));
            Assert.NotNull(messages[^1].Summary);
            var health = new Health.HealthClient(tls.Channel);
            Assert.Equal(HealthCheckResponse.Types.ServingStatus.Serving, (await health.CheckAsync(new HealthCheckRequest())).Status);
        }
        finally { File.Delete(path); }
    }
}
