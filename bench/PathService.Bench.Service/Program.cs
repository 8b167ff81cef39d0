using System.Diagnostics;
using Google.Protobuf;
using Grpc.Core;
using Grpc.Net.Client;
using Microsoft.Extensions.DependencyInjection;
using PathService.Application;
using PathService.Bench.Models;
using PathService.Contracts.Mapping;
using PathService.Contracts.V1;
using PathService.Engine.Continuation;
using PathService.Engine.Model;
using PathService.Server.Hosting;
using PathService.Server.Tests.Fixtures;
using EngineAxis = PathService.Engine.Model.Axis;
using ProtoControls = PathService.Contracts.V1.SolverControls;

// The real server on a loopback port, measured from a gRPC client in the same process.
// Usage: dotnet run -c Release --project bench/PathService.Bench.Service [-- first-point [RUNS] [CELLS]]
//                                                                        [-- overhead [RUNS] [M] [POINTS]]
// first-point: time from sending TracePath to receiving point 0 for a ~1,000-bar lattice cap (model mapping,
//   validation, assembly, first factorisation, serialisation, network), median of RUNS.
// overhead: the same m x m bench roof trace (POINTS points, default controls) in-process through the application layer
//   (what pathtrace's local mode runs: the same messages, mapped from the engine's events) and over gRPC to the server,
//   RUNS interleaved pairs; the ratio of wall times per pair, median. What remains is the streaming: serialisation,
//   transport, the client's parsing, the channel between the compute thread and the writer.
string mode = args.Length > 0 && !char.IsDigit(args[0][0]) ? args[0] : "first-point";
var rest = mode == "first-point" && (args.Length == 0 || char.IsDigit(args[0][0])) ? args : args.Skip(1).ToArray();

var app = ServerHost.Build(["--PathService:ListenAddress=127.0.0.1", "--PathService:GrpcPort=0", "--PathService:HttpPort=-1",
    "--Serilog:MinimumLevel:Default=Warning"]);
await app.StartAsync();
var url = BoundEndpoints.UrlOf(app.Services.GetRequiredService<BoundEndpoints>().Grpc!);
using var channel = GrpcChannel.ForAddress(url, new GrpcChannelOptions { MaxReceiveMessageSize = null, MaxSendMessageSize = null });
var client = new StructuralPathService.StructuralPathServiceClient(channel);
int code = mode switch
{
    "first-point" => await FirstPoint(rest),
    "overhead" => await Overhead(rest),
    _ => Usage(),
};
await app.StopAsync();
return code;

int Usage()
{
    Console.Error.WriteLine("usage: PathService.Bench.Service [first-point [RUNS] [CELLS]] | overhead [RUNS] [M] [POINTS]");
    return 2;
}

async Task<int> FirstPoint(string[] a)
{
    int runs = a.Length > 0 ? int.Parse(a[0]) : 5;
    int cells = a.Length > 1 ? int.Parse(a[1]) : 18; // 3·18² + 2·18 = 1,008 bars
    var (model, loads, crown) = DemoStructures.LatticeCap(cells);
    var (small, smallLoads, smallCrown) = DemoStructures.LatticeCap(3);
    // One point is enough: the trace ends right after point 0, so each run measures only the path to the first point.
    TracePathRequest Request(StructureModel m, LoadCase l, DofRef watch) => new()
    {
        Model = m, LoadCase = l, Controls = new ProtoControls { MaxPoints = 1, FullStateAtEnd = false, Monitored = { watch } },
    };
    var factorMs = new List<double>();
    var cpuMs = new List<double>();
    async Task<double> FirstPointMs(TracePathRequest request)
    {
        var process = Process.GetCurrentProcess();
        double cpu0 = process.TotalProcessorTime.TotalMilliseconds;
        var clock = Stopwatch.StartNew();
        using var call = client.TracePath(request);
        if (!await call.ResponseStream.MoveNext() || call.ResponseStream.Current.Point is null) throw new InvalidOperationException("no point came back");
        double ms = clock.Elapsed.TotalMilliseconds;
        process.Refresh();
        // CPU of the whole process (client and server) until point 0: on a shared host less dependent on the neighbours.
        cpuMs.Add(process.TotalProcessorTime.TotalMilliseconds - cpu0);
        while (await call.ResponseStream.MoveNext())
            if (call.ResponseStream.Current.Summary is { } summary) factorMs.Add(summary.FactorizationTime.ToTimeSpan().TotalMilliseconds);
        return ms;
    }

    await FirstPointMs(Request(small, smallLoads, smallCrown)); // warm-up: JIT, connection
    factorMs.Clear();
    cpuMs.Clear();
    var times = new List<double>();
    for (int i = 0; i < runs; i++) times.Add(await FirstPointMs(Request(model, loads, crown)));
    times.Sort();
    Console.WriteLine($"time to first point, {model.Nodes.Count} nodes / {model.Bars.Count} bars over loopback gRPC, {runs} runs: " +
        $"median {times[times.Count / 2]:F1} ms, min {times[0]:F1} ms, max {times[^1]:F1} ms (target < 25 ms); " +
        $"of which factorising the first tangent on the server: median {factorMs.Order().ElementAt(factorMs.Count / 2):F1} ms; " +
        $"process CPU until point 0: median {cpuMs.Order().ElementAt(cpuMs.Count / 2):F1} ms");
    return 0;
}

async Task<int> Overhead(string[] a)
{
    int runs = a.Length > 0 ? int.Parse(a[0]) : 5;
    int m = a.Length > 1 ? int.Parse(a[1]) : 60;
    int points = a.Length > 2 ? int.Parse(a[2]) : 30;
    var (model, loads) = RoofMessages(SpaceTrussRoof.Create(m));
    var watch = new DofRef { Node = SpaceTrussRoof.CentreNodeId(m), Direction = Direction.Z };
    // Default controls but the point budget and one monitored displacement, the same message for both sides.
    var controls = new ProtoControls { MaxPoints = points, Monitored = { watch } };
    var request = new TracePathRequest { Model = model, LoadCase = loads, Controls = controls };
    Console.WriteLine($"roof m = {m}: {model.Nodes.Count} nodes, {model.Bars.Count} bars, request {request.CalculateSize() / 1e6:F2} MB; {points} points, default controls");

    // In-process: the request through the application layer, as pathtrace's local mode runs it (mapping, validation,
    // the engine, every event mapped to its response message), every message read.
    // CPU time of the whole process (client, server and engine share it): on a host shared with other work, wall
    // time says little on its own, while the CPU seconds each side consumes do not depend on the neighbours.
    static double Cpu() => Process.GetCurrentProcess().TotalProcessorTime.TotalSeconds;
    var kinds = new SortedDictionary<string, (int Count, long Bytes)>();

    (double Seconds, int Points, long Bytes, double Cpu) InProcess()
    {
        double cpu0 = Cpu();
        var clock = Stopwatch.StartNew();
        var trace = new AnalysisApplication(AnalysisLimits.Default).PrepareTrace(request);
        int n = 0;
        double sink = 0;
        foreach (var r in trace.Run(null, CancellationToken.None))
            if (r.Point is { } p) { n++; sink += p.LoadFactor + p.Monitored[0].Value; }
        if (double.IsNaN(sink)) throw new InvalidOperationException("NaN");
        return (clock.Elapsed.TotalSeconds, n, 0, Cpu() - cpu0);
    }

    // Over gRPC: the same request, every streamed message read and its point's numbers used. The sizes of the messages
    // (a second walk over every one of them, which no client needs) are counted only when asked, in the warm-up run.
    async Task<(double Seconds, int Points, long Bytes, double Cpu)> OverGrpc(bool countBytes = false)
    {
        double cpu0 = Cpu();
        var clock = Stopwatch.StartNew();
        using var call = client.TracePath(request);
        int n = 0;
        long bytes = 0;
        double sink = 0;
        while (await call.ResponseStream.MoveNext())
        {
            var r = call.ResponseStream.Current;
            if (countBytes)
            {
                int size = r.CalculateSize();
                bytes += size;
                string kind = r.UpdateCase + (r.Point?.State is not null || r.CriticalPoint?.State is not null ? " with state" : "");
                kinds[kind] = kinds.TryGetValue(kind, out var k) ? (k.Count + 1, k.Bytes + size) : (1, size);
            }
            if (r.Point is { } p) { n++; sink += p.LoadFactor + p.Monitored[0].Value; }
        }
        if (double.IsNaN(sink)) throw new InvalidOperationException("NaN");
        return (clock.Elapsed.TotalSeconds, n, bytes, Cpu() - cpu0);
    }

    // The server's share alone: the same call with a client that takes each response's bytes off the wire without parsing
    // them (a forwarding proxy's view). On this 2-core host the client shares the cores with the server, so the parsing
    // client's wall time also carries the client's own work, which a plug-in on another machine does not put on the server.
    var rawMethod = new Method<TracePathRequest, byte[]>(MethodType.ServerStreaming, "pathservice.v1.StructuralPathService", "TracePath",
        Marshallers.Create((TracePathRequest r) => r.ToByteArray(), b => TracePathRequest.Parser.ParseFrom(b)),
        Marshallers.Create((byte[] b) => b, b => b));
    var invoker = channel.CreateCallInvoker();
    async Task<(double Seconds, long Messages, double Cpu)> Raw()
    {
        double cpu0 = Cpu();
        var clock = Stopwatch.StartNew();
        using var call = invoker.AsyncServerStreamingCall(rawMethod, null, new CallOptions(), request);
        long messages = 0, bytes = 0;
        while (await call.ResponseStream.MoveNext()) { messages++; bytes += call.ResponseStream.Current.Length; }
        if (bytes == 0) throw new InvalidOperationException("nothing streamed");
        return (clock.Elapsed.TotalSeconds, messages, Cpu() - cpu0);
    }

    // Warm-up of both paths (JIT, connection), not counted.
    InProcess();
    long streamed = (await OverGrpc(countBytes: true)).Bytes;
    await Raw();
    Console.WriteLine("  one trace streams: " + string.Join(", ", kinds.Select(k => $"{k.Value.Count} {k.Key} ({k.Value.Bytes / 1e3:F0} kB)")));
    var ratios = new List<double>();
    var cpuRatios = new List<double>();
    var local = new List<double>();
    var remote = new List<double>();
    var rawRatios = new List<double>();
    for (int i = 0; i < runs; i++)
    {
        // Alternate which side goes first, so a drift of the machine's speed does not favour one.
        (double Seconds, int Points, long Bytes, double Cpu) x, y;
        (double Seconds, long Messages, double Cpu) z;
        if (i % 2 == 0) { x = InProcess(); y = await OverGrpc(); z = await Raw(); }
        else { z = await Raw(); y = await OverGrpc(); x = InProcess(); }
        rawRatios.Add(z.Seconds / x.Seconds);
        if (x.Points != y.Points) throw new InvalidOperationException($"in-process {x.Points} points, gRPC {y.Points}");
        local.Add(x.Seconds); remote.Add(y.Seconds); ratios.Add(y.Seconds / x.Seconds); cpuRatios.Add(y.Cpu / x.Cpu);
        Console.WriteLine($"  pair {i + 1}: in-process {x.Seconds:F3} s wall / {x.Cpu:F2} s CPU, gRPC {y.Seconds:F3} s / {y.Cpu:F2} s CPU " +
            $"({y.Points} points, {streamed / 1e6:F2} MB streamed), ratio wall {y.Seconds / x.Seconds:F4}, CPU {y.Cpu / x.Cpu:F4}; " +
            $"unparsed {z.Seconds:F3} s / {z.Cpu:F2} s CPU, ratio wall {z.Seconds / x.Seconds:F4}, CPU {z.Cpu / x.Cpu:F4}");
    }
    ratios.Sort(); local.Sort(); remote.Sort(); cpuRatios.Sort(); rawRatios.Sort();
    Console.WriteLine($"streaming overhead, {runs} interleaved pairs: gRPC / in-process median {ratios[runs / 2]:F4} " +
        $"(range {ratios[0]:F4}–{ratios[^1]:F4}; target <= 1.05); medians in-process {local[runs / 2]:F3} s, gRPC {remote[runs / 2]:F3} s; " +
        $"CPU seconds gRPC / in-process median {cpuRatios[runs / 2]:F4} (range {cpuRatios[0]:F4}–{cpuRatios[^1]:F4}); " +
        $"the server's share (client not parsing): wall ratio median {rawRatios[runs / 2]:F4} (range {rawRatios[0]:F4}–{rawRatios[^1]:F4})");

    // The streaming work itself, timed apart from the engine (wall ratios of whole traces drift with this host's speed by
    // more than the few per cent sought): serialising one trace's messages as the server does (size, then write) and
    // parsing them as a client does, median of 7 repetitions, against the median in-process trace.
    var recorded = new AnalysisApplication(AnalysisLimits.Default).PrepareTrace(request).Run(null, CancellationToken.None).ToList();
    var wire = recorded.Select(r => r.ToByteArray()).ToList();
    double Median(Action act)
    {
        var times = new List<double>();
        for (int r = 0; r < 7; r++) { var w = Stopwatch.StartNew(); act(); times.Add(w.Elapsed.TotalSeconds); }
        times.Sort();
        return times[3];
    }
    long sink2 = 0;
    double write = Median(() => { foreach (var r in recorded) { var buffer = new byte[r.CalculateSize()]; r.WriteTo(buffer); sink2 += buffer.Length; } });
    double parse = Median(() => { foreach (var b in wire) sink2 += TracePathResponse.Parser.ParseFrom(b).CalculateSize() > 0 ? 1 : 0; });
    Console.WriteLine($"streaming work of one trace ({recorded.Count} messages, {wire.Sum(b => (long)b.Length) / 1e6:F2} MB), median of 7: serialising (server) " +
        $"{write * 1e3:F1} ms = {100 * write / local[runs / 2]:F1} % of the in-process trace, parsing (client) {parse * 1e3:F1} ms = {100 * parse / local[runs / 2]:F1} %{(sink2 < 0 ? "" : "")}");
    return 0;
}

static (StructureModel Model, LoadCase Loads) RoofMessages(ModelDefinition d)
{
    var model = new StructureModel { Name = d.Name, Units = new PathService.Contracts.V1.UnitLabels { Force = "kN", Length = "m" } };
    foreach (var n in d.Nodes) model.Nodes.Add(new Node { Id = n.Id, X = n.X, Y = n.Y, Z = n.Z });
    foreach (var b in d.Bars) model.Bars.Add(new Bar { Id = b.Id, StartNode = b.StartNode, EndNode = b.EndNode, ElasticModulus = b.ElasticModulus, Area = b.Area });
    foreach (var s in d.Supports) model.Supports.Add(new Support { Node = s.Node, Direction = ModelMapper.ToDirection(s.Direction) });
    var loads = new LoadCase();
    foreach (var l in d.Loads.Reference) loads.Reference.Add(new PathService.Contracts.V1.NodalLoad { Node = l.Node, Fx = l.Fx, Fy = l.Fy, Fz = l.Fz });
    return (model, loads);
}
