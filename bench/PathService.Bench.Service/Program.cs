using System.Diagnostics;
using Grpc.Core;
using Grpc.Net.Client;
using Microsoft.Extensions.DependencyInjection;
using PathService.Contracts.V1;
using PathService.Server.Hosting;
using PathService.Server.Tests.Fixtures;

// Time to first streamed point: the real server on a loopback port, a ~1,000-bar lattice cap, the time from sending
// TracePath to receiving point 0 (model mapping, validation, assembly, first factorisation, serialisation, network).
// Usage: dotnet run -c Release --project bench/PathService.Bench.Service [-- RUNS [CELLS]]
int runs = args.Length > 0 ? int.Parse(args[0]) : 5;
int cells = args.Length > 1 ? int.Parse(args[1]) : 18; // 3·18² + 2·18 = 1,008 bars

var app = ServerHost.Build(["--PathService:ListenAddress=127.0.0.1", "--PathService:GrpcPort=0", "--PathService:HttpPort=-1",
    "--Serilog:MinimumLevel:Default=Warning"]);
await app.StartAsync();
var url = BoundEndpoints.UrlOf(app.Services.GetRequiredService<BoundEndpoints>().Grpc!);
using var channel = GrpcChannel.ForAddress(url);
var client = new StructuralPathService.StructuralPathServiceClient(channel);

var (model, loads, crown) = DemoStructures.LatticeCap(cells);
var (small, smallLoads, smallCrown) = DemoStructures.LatticeCap(3);
// One point is enough: the trace ends right after point 0, so each run measures only the path to the first point.
TracePathRequest Request(StructureModel m, LoadCase l, DofRef watch) => new()
{
    Model = m, LoadCase = l, Controls = new SolverControls { MaxPoints = 1, FullStateAtEnd = false, Monitored = { watch } },
};

var factorMs = new List<double>();
async Task<double> FirstPointMs(TracePathRequest request)
{
    var clock = Stopwatch.StartNew();
    using var call = client.TracePath(request);
    if (!await call.ResponseStream.MoveNext() || call.ResponseStream.Current.Point is null) throw new InvalidOperationException("no point came back");
    double ms = clock.Elapsed.TotalMilliseconds;
    while (await call.ResponseStream.MoveNext())
        if (call.ResponseStream.Current.Summary is { } summary) factorMs.Add(summary.FactorizationTime.ToTimeSpan().TotalMilliseconds);
    return ms;
}

await FirstPointMs(Request(small, smallLoads, smallCrown)); // warm-up: JIT, connection
factorMs.Clear();
var times = new List<double>();
for (int i = 0; i < runs; i++) times.Add(await FirstPointMs(Request(model, loads, crown)));
times.Sort();
Console.WriteLine($"time to first point, {model.Nodes.Count} nodes / {model.Bars.Count} bars over loopback gRPC, {runs} runs: " +
    $"median {times[times.Count / 2]:F1} ms, min {times[0]:F1} ms, max {times[^1]:F1} ms (target < 50 ms); " +
    $"of which factorising the first tangent on the server: median {factorMs.Order().ElementAt(factorMs.Count / 2):F1} ms");
await app.StopAsync();
