using System.Collections.Concurrent;
using System.Diagnostics;
using Google.Protobuf;
using Google.Protobuf.Reflection;
using PathService.Server.Hosting;
using Grpc.Core;
using Microsoft.Extensions.DependencyInjection;
using PathService.Contracts.V1;
using PathService.Server.Services;
using PathService.Server.Tests.Fixtures;
using Xunit.Abstractions;

namespace PathService.Server.Tests;

/// <summary>
/// Property: whatever arrives, the server answers with a well-formed gRPC status (never UNKNOWN or INTERNAL, always a
/// message), stays up, and never returns a non-finite number. Seeded, so a failure names the seed and case that
/// reproduce it. Most cases run in-process against the service class (mapping, validation, limits, the engine); a few
/// thousand go over the loopback server, typed and as raw bytes (random, truncated and bit-flipped messages).
/// </summary>
[Collection(ServerCollection.Name)]
public sealed class FuzzTests(ITestOutputHelper output) : IAsyncLifetime
{
    private const int Seed = 20240611;
    private static readonly string[] Rpcs = ["TracePath", "CheckModel", "AnalyzeLinear", "FindBucklingModes"];

    /// <summary>Fuzz limits: short traces, so that the odd valid case costs milliseconds.</summary>
    private static readonly string[] Settings =
    [
        "Limits:MaxPoints=30", "Limits:MaxTraceSeconds=0.25", "Limits:MaxConcurrentAnalyses=4", "Limits:MaxQueuedAnalyses=64",
        "Limits:QueueTimeoutSeconds=30", "Limits:MaxBars=60000", "Limits:MaxNodes=20000", "Limits:MaxRequestBytes=4194304",
    ];

    private TestServer _server = null!;

    public async Task InitializeAsync() => _server = await TestServer.StartAsync(Settings);
    public async Task DisposeAsync() => await _server.DisposeAsync();

    /// <summary>Where the case counts are appended, so that scripts/test.sh can print them after a quiet test run.</summary>
    public static string ReportFile => Path.Combine(AppContext.BaseDirectory, "fuzz-report.txt");

    private void Report(string line)
    {
        output.WriteLine(line);
        Console.WriteLine(line);
        lock (typeof(FuzzTests)) File.AppendAllText(ReportFile, line + Environment.NewLine);
    }

    [Fact]
    public async Task In_process_mutated_requests_get_a_specific_status_and_finite_numbers()
    {
        const int perWorker = 12_000;
        var service = ActivatorUtilities.CreateInstance<StructuralPathGrpcService>(_server.App.Services);
        var failures = new ConcurrentQueue<string>();
        var codes = new ConcurrentDictionary<StatusCode, int>();
        long cases = 0;
        var clock = Stopwatch.StartNew();
        var workers = Enumerable.Range(0, 2).Select(w => Task.Run(async () =>
        {
            var fuzz = new RequestFuzzer(Seed + w);
            for (int i = 0; i < perWorker && clock.Elapsed < TimeSpan.FromSeconds(100); i++)
            {
                string rpc = Rpcs[i % Rpcs.Length];
                var request = fuzz.Next(rpc);
                var code = await CallInProcessAsync(service, rpc, request, $"seed {Seed + w} case {i} {rpc}", failures);
                codes.AddOrUpdate(code, 1, (_, n) => n + 1);
                Interlocked.Increment(ref cases);
            }
        })).ToArray();
        await Task.WhenAll(workers);
        Report($"fuzz in-process: {cases} cases in {clock.Elapsed.TotalSeconds:0.0} s; statuses {string.Join(", ", codes.OrderBy(c => c.Key).Select(c => $"{c.Key} {c.Value}"))}");
        Assert.True(failures.IsEmpty, $"{failures.Count} failures, e.g.:\n{string.Join("\n", failures.Take(10))}");
        Assert.True(cases >= 10_000, $"only {cases} cases ran in the time box");
        Assert.True(await _server.WaitForIdleAsync(TimeSpan.FromSeconds(10)));
    }

    private static async Task<StatusCode> CallInProcessAsync(StructuralPathGrpcService service, string rpc, IMessage request, string label, ConcurrentQueue<string> failures)
    {
        var context = new InProcessCallContext(rpc);
        try
        {
            IMessage[] responses = rpc switch
            {
                "TracePath" => await Trace(),
                "CheckModel" => [await service.CheckModel((CheckModelRequest)request, context)],
                "AnalyzeLinear" => [await service.AnalyzeLinear((AnalyzeLinearRequest)request, context)],
                _ => [await service.FindBucklingModes((FindBucklingModesRequest)request, context)],
            };
            foreach (var r in responses)
                if (RequestFuzzer.FindNonFinite(r) is { } where) failures.Enqueue($"{label}: non-finite number in the response: {where}");
            return StatusCode.OK;
        }
        catch (RpcException ex)
        {
            if (ex.StatusCode is StatusCode.Unknown or StatusCode.Internal || string.IsNullOrWhiteSpace(ex.Status.Detail))
                failures.Enqueue($"{label}: {ex.StatusCode} '{ex.Status.Detail}'");
            return ex.StatusCode;
        }
        catch (Exception ex)
        {
            failures.Enqueue($"{label}: unhandled {ex.GetType().Name}: {ex.Message}\n{ex.StackTrace}");
            return StatusCode.Unknown;
        }

        async Task<IMessage[]> Trace()
        {
            var writer = new CollectingStreamWriter<TracePathResponse>();
            await service.TracePath((TracePathRequest)request, writer, context);
            return [.. writer.Messages];
        }
    }

    [Fact]
    public async Task Mutated_requests_over_the_wire_get_a_specific_status()
    {
        var failures = new ConcurrentQueue<string>();
        var codes = new ConcurrentDictionary<StatusCode, int>();
        long cases = 0;
        var clock = Stopwatch.StartNew();
        var methods = WireMethods;
        var workers = Enumerable.Range(0, 4).Select(w => Task.Run(async () =>
        {
            var fuzz = new RequestFuzzer(Seed + 100 + w);
            for (int i = 0; i < 400; i++)
            {
                var method = methods[i % methods.Count];
                var request = fuzz.Next(method);
                var code = await CallOverWireAsync(method, request.ToByteArray(), $"seed {Seed + 100 + w} case {i} {method.Name}", failures);
                codes.AddOrUpdate(code, 1, (_, n) => n + 1);
                Interlocked.Increment(ref cases);
            }
        })).ToArray();
        await Task.WhenAll(workers);
        Report($"fuzz over loopback (typed): {cases} cases in {clock.Elapsed.TotalSeconds:0.0} s; statuses {string.Join(", ", codes.OrderBy(c => c.Key).Select(c => $"{c.Key} {c.Value}"))}");
        Assert.True(failures.IsEmpty, $"{failures.Count} failures, e.g.:\n{string.Join("\n", failures.Take(10))}");
        await AssertServerAliveAsync();
    }

    [Fact]
    public async Task Random_truncated_and_corrupted_bytes_get_a_specific_status()
    {
        var failures = new ConcurrentQueue<string>();
        var codes = new ConcurrentDictionary<StatusCode, int>();
        long cases = 0;
        var clock = Stopwatch.StartNew();
        var methods = WireMethods;
        var workers = Enumerable.Range(0, 4).Select(w => Task.Run(async () =>
        {
            var r = new Random(Seed + 200 + w);
            var fuzz = new RequestFuzzer(Seed + 300 + w);
            for (int i = 0; i < 400; i++)
            {
                var method = methods[i % methods.Count];
                string rpc = method.Name;
                byte[] valid = fuzz.Next(method).ToByteArray();
                byte[] bytes;
                string kind;
                switch (r.Next(4))
                {
                    case 0:
                        bytes = new byte[r.Next(1, 512)];
                        r.NextBytes(bytes);
                        kind = "random";
                        break;
                    case 1 when valid.Length > 1:
                        bytes = valid[..r.Next(1, valid.Length)];
                        kind = "truncated";
                        break;
                    case 2 when valid.Length > 0:
                        bytes = (byte[])valid.Clone();
                        for (int k = 0, n = 1 + r.Next(8); k < n; k++) bytes[r.Next(bytes.Length)] ^= (byte)(1 << r.Next(8));
                        kind = "bit-flipped";
                        break;
                    default:
                        // A length-delimited field whose declared length runs far past the end of the message.
                        bytes = [0x0a, 0xff, 0xff, 0xff, 0x7f, 0x01, 0x02];
                        kind = "overlong";
                        break;
                }
                var code = await CallOverWireAsync(method, bytes, $"seed {Seed + 200 + w} case {i} {rpc} {kind}", failures);
                codes.AddOrUpdate(code, 1, (_, n) => n + 1);
                Interlocked.Increment(ref cases);
            }
        })).ToArray();
        await Task.WhenAll(workers);
        Report($"fuzz over loopback (raw bytes): {cases} cases in {clock.Elapsed.TotalSeconds:0.0} s; statuses {string.Join(", ", codes.OrderBy(c => c.Key).Select(c => $"{c.Key} {c.Value}"))}");
        Assert.True(failures.IsEmpty, $"{failures.Count} failures, e.g.:\n{string.Join("\n", failures.Take(10))}");
        await AssertServerAliveAsync();
    }

    private async Task AssertServerAliveAsync()
    {
        var reply = await _server.Client.CheckModelAsync(new CheckModelRequest { Model = DemoStructures.TwoBarTruss(), LoadCase = DemoStructures.ApexLoad() });
        Assert.True(reply.Valid);
        Assert.True(await _server.WaitForIdleAsync(TimeSpan.FromSeconds(10)));
    }

    private static readonly Marshaller<byte[]> Raw = Marshallers.Create(b => b, b => b);

    /// <summary>Every method of every service of the contract that takes one request message, from the descriptors: a new RPC is fuzzed without being listed here.</summary>
    private static IReadOnlyList<MethodDescriptor> WireMethods => ContractCatalog.SingleRequestMethods.Values.OrderBy(m => m.FullName, StringComparer.Ordinal).ToList();

    private async Task<StatusCode> CallOverWireAsync(MethodDescriptor m, byte[] body, string label, ConcurrentQueue<string> failures)
    {
        var invoker = _server.Channel.CreateCallInvoker();
        var options = new CallOptions(deadline: DateTime.UtcNow.AddSeconds(30));
        try
        {
            if (m.IsServerStreaming)
            {
                var method = new Method<byte[], byte[]>(MethodType.ServerStreaming, m.Service.FullName, m.Name, Raw, Raw);
                using var call = invoker.AsyncServerStreamingCall(method, null, options, body);
                while (await call.ResponseStream.MoveNext(CancellationToken.None))
                    Check(m.OutputType.Parser.ParseFrom(call.ResponseStream.Current));
            }
            else
            {
                var method = new Method<byte[], byte[]>(MethodType.Unary, m.Service.FullName, m.Name, Raw, Raw);
                var reply = await invoker.AsyncUnaryCall(method, null, options, body);
                Check(m.OutputType.Parser.ParseFrom(reply));
            }
            return StatusCode.OK;
        }
        catch (RpcException ex)
        {
            if (ex.StatusCode is StatusCode.Unknown or StatusCode.Internal or StatusCode.Unavailable || string.IsNullOrWhiteSpace(ex.Status.Detail))
                failures.Enqueue($"{label}: {ex.StatusCode} '{ex.Status.Detail}'");
            return ex.StatusCode;
        }

        void Check(IMessage m)
        {
            if (RequestFuzzer.FindNonFinite(m) is { } where) failures.Enqueue($"{label}: non-finite number in the response: {where}");
        }
    }
}
