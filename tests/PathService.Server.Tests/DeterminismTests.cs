using System.Diagnostics;
using System.Net;
using System.Net.Sockets;
using System.Reflection;
using System.Security.Cryptography;
using Google.Protobuf;
using Grpc.Core;
using Grpc.Health.V1;
using Grpc.Net.Client;
using PathService.Contracts.Mapping;
using PathService.Contracts.V1;
using PathService.Engine.Assembly;
using PathTracer = PathService.Engine.Continuation.PathTracer;
using PathService.Engine.Sparse;
using PathService.Server.Tests.Fixtures;
using Xunit.Abstractions;
using StructuralModel = PathService.Engine.Model.StructuralModel;

namespace PathService.Server.Tests;

/// <summary>
/// The same request gives bit-identical path points, run after run and whatever the number of threads of the
/// engine's parallel kernels; the summary names the request (fingerprint) and the engine version.
/// </summary>
[Collection(ServerCollection.Name)]
public sealed class DeterminismTests(ServerFixture server, ITestOutputHelper output)
{
    /// <summary>Path content without the timing fields: every point, critical point and step cut, serialised.</summary>
    private static List<byte[]> PathBytes(IEnumerable<TracePathResponse> messages) =>
        messages.Where(m => m.Summary is null).Select(m => m.ToByteArray()).ToList();

    private static void AssertSamePath(List<byte[]> a, List<byte[]> b)
    {
        Assert.Equal(a.Count, b.Count);
        for (int i = 0; i < a.Count; i++) Assert.True(a[i].AsSpan().SequenceEqual(b[i]), $"message {i} differs");
    }

    /// <summary>A cap big enough for the parallel code paths: 37×37 cells, 4,181 bars (parallel assembly from 4,000).</summary>
    private static TracePathRequest ParallelSizedTrace()
    {
        var (model, loads, crown) = DemoStructures.LatticeCap(37);
        return new TracePathRequest
        {
            Model = model, LoadCase = loads,
            Controls = new SolverControls { InitialLoadIncrement = 0.05, MaxPoints = 3, FullStateAtEnd = true, Monitored = { crown } },
        };
    }

    [Fact]
    public async Task Repeated_runs_give_bit_identical_points_and_the_summary_carries_fingerprint_and_engine_version()
    {
        var request = Requests.Truss();
        var first = await Requests.ReadAllAsync(server.Client.TracePath(request));
        var second = await Requests.ReadAllAsync(server.Client.TracePath(request));
        Assert.True(first.Count(m => m.Point is not null) > 5);
        AssertSamePath(PathBytes(first), PathBytes(second));

        var summary = first[^1].Summary;
        Assert.Equal(Convert.ToHexStringLower(SHA256.HashData(request.ToByteArray())), summary.Fingerprint);
        Assert.Equal(summary.Fingerprint, second[^1].Summary.Fingerprint);
        string expected = typeof(PathTracer).Assembly.GetCustomAttribute<AssemblyInformationalVersionAttribute>()!.InformationalVersion;
        Assert.Equal(expected, summary.EngineVersion);

        var other = request.Clone();
        other.Controls.MaxPoints -= 1;
        var third = await Requests.ReadAllAsync(server.Client.TracePath(other));
        Assert.NotEqual(summary.Fingerprint, third[^1].Summary.Fingerprint);
    }

    [Fact]
    public void The_supernodal_factorisation_gives_the_same_bits_with_one_and_two_threads()
    {
        var request = ParallelSizedTrace();
        var model = StructuralModel.Create(ModelMapper.ToDefinition(request.Model, request.LoadCase));
        var assembler = new StructureAssembler(model);
        var values = new double[assembler.Pattern.NonZeroCount];
        assembler.Tangent(new double[3 * model.NodeCount], values);
        var symbolic = LdlSymbolic.Analyze(assembler.Pattern);
        double[] Solve(int threads)
        {
            var factor = new SupernodalLdlFactorization(symbolic, threads);
            Assert.Equal(threads, factor.Threads);
            factor.Factorize(values);
            var x = new double[symbolic.Pattern.Size];
            for (int i = 0; i < x.Length; i++) x[i] = Math.Sin(i + 1.0);
            factor.Solve(x);
            return x;
        }
        var one = Solve(1);
        var two = Solve(2);
        var four = Solve(4);
        Assert.True(one.AsSpan().SequenceEqual(two), "1 and 2 threads differ");
        Assert.True(one.AsSpan().SequenceEqual(four), "1 and 4 threads differ");
    }

    /// <summary>
    /// Whole server, whole trace: the server in a child process whose processor count (and so the thread count of the
    /// factorisation and the assembly) is set to 1 and to 2 by DOTNET_PROCESSOR_COUNT.
    /// </summary>
    [Fact]
    public async Task A_server_with_one_thread_and_one_with_two_threads_stream_identical_paths()
    {
        var request = ParallelSizedTrace();
        var paths = new List<List<byte[]>>();
        var fingerprints = new List<string>();
        foreach (int cpus in new[] { 1, 2 })
        {
            var clock = Stopwatch.StartNew();
            await using var child = await ChildServer.StartAsync(cpus);
            var messages = await Requests.ReadAllAsync(child.Client.TracePath(request));
            Assert.NotNull(messages[^1].Summary);
            paths.Add(PathBytes(messages));
            fingerprints.Add(messages[^1].Summary.Fingerprint);
            output.WriteLine($"DOTNET_PROCESSOR_COUNT={cpus}: {messages.Count(m => m.Point is not null)} points in {clock.Elapsed.TotalSeconds:0.0} s");
        }
        Assert.True(paths[0].Count >= 3);
        AssertSamePath(paths[0], paths[1]);
        Assert.Equal(fingerprints[0], fingerprints[1]);
    }

    private sealed class ChildServer : IAsyncDisposable
    {
        private Process _process = null!;
        private GrpcChannel _channel = null!;
        public StructuralPathService.StructuralPathServiceClient Client { get; private set; } = null!;

        public static async Task<ChildServer> StartAsync(int processors)
        {
            int port;
            using (var l = new TcpListener(IPAddress.Loopback, 0)) { l.Start(); port = ((IPEndPoint)l.LocalEndpoint).Port; }
            var psi = new ProcessStartInfo("dotnet") { UseShellExecute = false, RedirectStandardOutput = true, RedirectStandardError = true };
            psi.ArgumentList.Add(Path.Combine(AppContext.BaseDirectory, "PathService.Server.dll"));
            foreach (var a in new[] { "--PathService:ListenAddress=127.0.0.1", $"--PathService:GrpcPort={port}", "--PathService:HttpPort=-1", "--Serilog:MinimumLevel:Default=Warning" })
                psi.ArgumentList.Add(a);
            psi.Environment["DOTNET_PROCESSOR_COUNT"] = processors.ToString(System.Globalization.CultureInfo.InvariantCulture);
            var s = new ChildServer { _process = Process.Start(psi)! };
            s._process.OutputDataReceived += (_, _) => { };
            s._process.ErrorDataReceived += (_, _) => { };
            s._process.BeginOutputReadLine();
            s._process.BeginErrorReadLine();
            s._channel = GrpcChannel.ForAddress($"http://127.0.0.1:{port}", new GrpcChannelOptions { MaxReceiveMessageSize = 64 << 20 });
            s.Client = new StructuralPathService.StructuralPathServiceClient(s._channel);
            var health = new Health.HealthClient(s._channel);
            var until = DateTime.UtcNow.AddSeconds(60);
            while (true)
            {
                try
                {
                    if ((await health.CheckAsync(new HealthCheckRequest(), deadline: DateTime.UtcNow.AddSeconds(2))).Status == HealthCheckResponse.Types.ServingStatus.Serving) break;
                }
                catch (RpcException) when (DateTime.UtcNow < until && !s._process.HasExited) { }
                if (DateTime.UtcNow >= until || s._process.HasExited) throw new InvalidOperationException("the child server did not start");
                await Task.Delay(100);
            }
            return s;
        }

        public async ValueTask DisposeAsync()
        {
            _channel.Dispose();
            if (!_process.HasExited)
            {
                _process.Kill(entireProcessTree: true);
                await _process.WaitForExitAsync();
            }
            _process.Dispose();
        }
    }
}
