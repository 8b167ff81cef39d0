using System.Net;
using Google.Protobuf;
using Google.Protobuf.Reflection;
using Google.Rpc;
using Grpc.Core;
using Grpc.Health.V1;
using Grpc.Reflection.V1Alpha;
using PathService.Contracts.V1;
using PathService.Server.Hosting;
using PathService.Server.Tests.Fixtures;
using StatusCode = Grpc.Core.StatusCode;
using Status = Grpc.Core.Status;

namespace PathService.Server.Tests;

/// <summary>
/// Authentication, the request guard and the per-caller cap hold for every method of every service of the contract,
/// enumerated from the service descriptors: an RPC added to a .proto file is covered by these tests without being
/// named here.
/// </summary>
[Collection(ServerCollection.Name)]
public sealed class ContractCoverageTests : IAsyncLifetime
{
    private const string Key = "coverage-test-key-51a9";
    private TestServer _server = null!;

    public async Task InitializeAsync() => _server = await TestServer.StartAsync(
    [
        "Security:ApiKeys:Keys:0:Name=carol", $"Security:ApiKeys:Keys:0:Key={Key}", "Security:ApiKeys:Keys:0:MaxConcurrentAnalyses=1",
        "Limits:MaxConcurrentAnalyses=4",
    ]);

    public async Task DisposeAsync() => await _server.DisposeAsync();

    public static TheoryData<string> AllMethods()
    {
        var data = new TheoryData<string>();
        foreach (var m in ContractCatalog.Methods) data.Add(m.FullName);
        return data;
    }

    private static MethodDescriptor MethodNamed(string fullName) => ContractCatalog.Methods.Single(m => m.FullName == fullName);

    private static readonly Marshaller<byte[]> Raw = Marshallers.Create(b => b, b => b);

    /// <summary>Calls a method with raw request bytes; returns the final status (OK when every response parsed).</summary>
    private async Task<Status> CallRawAsync(MethodDescriptor m, byte[] body, Metadata? headers)
    {
        var invoker = _server.Channel.CreateCallInvoker();
        var options = new CallOptions(headers, DateTime.UtcNow.AddSeconds(30));
        var type = (m.IsClientStreaming, m.IsServerStreaming) switch
        {
            (false, false) => MethodType.Unary,
            (false, true) => MethodType.ServerStreaming,
            (true, false) => MethodType.ClientStreaming,
            _ => MethodType.DuplexStreaming,
        };
        var method = new Method<byte[], byte[]>(type, m.Service.FullName, m.Name, Raw, Raw);
        try
        {
            switch (type)
            {
                case MethodType.Unary:
                    m.OutputType.Parser.ParseFrom(await invoker.AsyncUnaryCall(method, null, options, body));
                    break;
                case MethodType.ServerStreaming:
                    using (var call = invoker.AsyncServerStreamingCall(method, null, options, body))
                        while (await call.ResponseStream.MoveNext(CancellationToken.None)) m.OutputType.Parser.ParseFrom(call.ResponseStream.Current);
                    break;
                default:
                    using (var call = invoker.AsyncDuplexStreamingCall(method, null, options))
                    {
                        await call.RequestStream.WriteAsync(body);
                        await call.RequestStream.CompleteAsync();
                        while (await call.ResponseStream.MoveNext(CancellationToken.None)) m.OutputType.Parser.ParseFrom(call.ResponseStream.Current);
                    }
                    break;
            }
            return Status.DefaultSuccess;
        }
        catch (RpcException ex) { return ex.Status; }
    }

    [Fact]
    public void The_contract_catalog_holds_both_services_and_every_rpc()
    {
        // A guard against the catalog silently becoming empty (the theories below would then prove nothing).
        Assert.Contains(ContractCatalog.Services, s => s.FullName == "pathservice.v1.StructuralPathService");
        Assert.Contains(ContractCatalog.Services, s => s.FullName == "pathservice.v1.ImperfectionSweepService");
        Assert.Contains(ContractCatalog.Methods, m => m.Name == "SweepImperfections");
        Assert.Contains(ContractCatalog.Methods, m => m.Name == "ImportIfcModel");
        Assert.Equal(6, ContractCatalog.Methods.Count);
        Assert.Equal(4, ContractCatalog.JsonPostRoutes.Count);
    }

    [Theory]
    [MemberData(nameof(AllMethods))]
    public async Task Every_rpc_without_a_key_is_unauthenticated_and_with_a_wrong_key_permission_denied(string method)
    {
        var m = MethodNamed(method);
        byte[] empty = [];
        Assert.Equal(StatusCode.Unauthenticated, (await CallRawAsync(m, empty, null)).StatusCode);
        Assert.Equal(StatusCode.PermissionDenied, (await CallRawAsync(m, empty, new Metadata { { "x-api-key", "wrong-key" } })).StatusCode);
        // The same bytes with the key pass authentication: whatever the answer, it is not an authentication refusal.
        var keyed = await CallRawAsync(m, empty, new Metadata { { "x-api-key", Key } });
        Assert.NotEqual(StatusCode.Unauthenticated, keyed.StatusCode);
        Assert.NotEqual(StatusCode.PermissionDenied, keyed.StatusCode);
    }

    [Theory]
    [MemberData(nameof(AllMethods))]
    public async Task Garbage_bytes_to_every_rpc_get_invalid_argument_and_no_error_log(string method)
    {
        var m = MethodNamed(method);
        var r = new Random(4711);
        var original = Console.Out;
        var captured = new StringWriter();
        Console.SetOut(TextWriter.Synchronized(captured));
        try
        {
            for (int i = 0; i < 20; i++)
            {
                byte[] bytes = new byte[r.Next(1, 300)];
                r.NextBytes(bytes);
                bytes[0] = 0x0a; // field 1, length-delimited...
                bytes[1] = 0xff; // ...with a length that runs past the end: never a valid message
                if (bytes.Length < 2) continue;
                var status = await CallRawAsync(m, bytes, new Metadata { { "x-api-key", Key } });
                Assert.True(status.StatusCode == StatusCode.InvalidArgument, $"{m.Name} case {i}: {status.StatusCode} '{status.Detail}'");
                Assert.False(string.IsNullOrWhiteSpace(status.Detail));
            }
            await Task.Delay(200);
        }
        finally { Console.SetOut(original); }
        Assert.DoesNotContain("\"@l\":\"Error\"", captured.ToString());
        Assert.DoesNotContain("\"@l\":\"Fatal\"", captured.ToString());
    }

    [Fact]
    public async Task Health_and_reflection_are_the_only_services_open_without_a_key()
    {
        var health = new Health.HealthClient(_server.Channel);
        Assert.Equal(HealthCheckResponse.Types.ServingStatus.Serving, (await health.CheckAsync(new HealthCheckRequest())).Status);
        var reflection = new ServerReflection.ServerReflectionClient(_server.Channel);
        using var call = reflection.ServerReflectionInfo();
        await call.RequestStream.WriteAsync(new ServerReflectionRequest { ListServices = "" });
        await call.RequestStream.CompleteAsync();
        Assert.True(await call.ResponseStream.MoveNext(CancellationToken.None));
        var listed = call.ResponseStream.Current.ListServicesResponse.Service.Select(s => s.Name).ToList();
        // Every contract service is listed (the schema is public) but, as the theory above shows, none answers without a key.
        foreach (var s in ContractCatalog.Services) Assert.Contains(s.FullName, listed);
    }

    [Fact]
    public async Task Every_json_route_needs_a_key()
    {
        using var http = new HttpClient { BaseAddress = new Uri(_server.HttpUrl) };
        foreach (var (path, method) in ContractCatalog.JsonPostRoutes)
        {
            using var response = await http.PostAsync(path, new StringContent("{}", System.Text.Encoding.UTF8, "application/json"));
            Assert.True(response.StatusCode == HttpStatusCode.Unauthorized, $"{path} ({method.Name}): {response.StatusCode}");
        }
    }

    [Fact]
    public async Task The_per_caller_cap_covers_the_imperfection_sweep()
    {
        using var cts = new CancellationTokenSource();
        var headers = new Metadata { { "x-api-key", Key } };
        using var first = _server.Client.TracePath(Requests.LongTrace(), headers, cancellationToken: cts.Token);
        try
        {
            Assert.True(await first.ResponseStream.MoveNext());
            var sweep = new ImperfectionSweepService.ImperfectionSweepServiceClient(_server.Channel);
            using var call = sweep.SweepImperfections(new SweepImperfectionsRequest
            {
                Model = DemoStructures.TwoBarTruss(), LoadCase = DemoStructures.ApexLoad(),
                Imperfection = new Imperfection { BucklingModes = { 1 } }, Amplitudes = { 0.01 },
            }, headers);
            var ex = await Assert.ThrowsAsync<RpcException>(async () => { while (await call.ResponseStream.MoveNext()) { } });
            Assert.Equal(StatusCode.ResourceExhausted, ex.StatusCode);
            Assert.Equal("caller:carol", ex.GetRpcStatus()!.GetDetail<QuotaFailure>()!.Violations[0].Subject);
        }
        finally
        {
            cts.Cancel();
            Assert.True(await _server.WaitForIdleAsync(TimeSpan.FromSeconds(5)));
        }
    }
}
