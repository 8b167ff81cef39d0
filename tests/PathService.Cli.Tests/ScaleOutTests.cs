using System.Diagnostics;
using PathService.Cli.Backends;
using PathService.Cli.Output;
using PathService.Contracts.V1;
using Xunit.Abstractions;

namespace PathService.Cli.Tests;

/// <summary>
/// Scale-out as behind a headless Service: three real server instances, one client channel balancing round-robin
/// over their addresses. The traces spread over all three and equal the in-process results; an instance killed while it
/// streams a trace costs the caller nothing but time: the trace restarts on another instance and the path is complete.
/// </summary>
public class ScaleOutTests(ITestOutputHelper output)
{
    [Fact]
    public async Task Traces_spread_over_three_instances_and_survive_the_loss_of_the_streaming_one()
    {
        var clock = Stopwatch.StartNew();
        var servers = new List<ServerInstance>();
        try
        {
            for (int i = 0; i < 3; i++) servers.Add(await ServerInstance.StartAsync(slots: 4));
            await using var backend = new GrpcBackend(string.Join(",", servers.Select(s => s.GrpcUrl)));

            // Reference results, in this process.
            var truss = Models.TwoBarTruss();
            var roof = RequestReader.Read(Repo.Example("roof-truss-spring-bearings.json"));
            var longTrace = Models.LatticeCap(cells: 8, points: 150);
            PathRecorder trussRef, roofRef, longRef;
            await using (var local = new InProcessBackend())
            {
                trussRef = await Traces.RecordAsync(local, truss);
                roofRef = await Traces.RecordAsync(local, roof);
                longRef = await Traces.RecordAsync(local, longTrace);
            }
            Assert.Equal(2, trussRef.Criticals.Count);
            Assert.NotEmpty(roofRef.Criticals);
            output.WriteLine($"references ready after {clock.Elapsed.TotalSeconds:F1} s");

            // Thirty traces, four at a time (each instance has four slots, so no call can be refused as busy).
            var requests = Enumerable.Range(0, 30).Select(i => i % 2 == 0 ? (Name: "two-bar truss", Request: truss, Ref: trussRef) : (Name: "roof truss", Request: roof, Ref: roofRef)).ToList();
            using var gate = new SemaphoreSlim(4);
            var results = await Task.WhenAll(requests.Select(async r =>
            {
                await gate.WaitAsync();
                try { return (r, Rec: await Traces.RecordAsync(backend, r.Request)); }
                finally { gate.Release(); }
            }));
            foreach (var (r, recorded) in results) Traces.AssertSamePath(r.Ref, recorded, r.Name);

            var counts = servers.Select(s => s.TraceCalls).ToList();
            output.WriteLine($"traces per instance: {string.Join(", ", counts)} after {clock.Elapsed.TotalSeconds:F1} s");
            Assert.Equal(30, counts.Sum());
            Assert.All(counts, c => Assert.True(c >= 5, $"an instance took only {c} of 30 traces: {string.Join(", ", counts)}"));

            // A long trace (full state on every point, so flow control keeps the server from running far ahead);
            // after ten points the instance streaming it is killed.
            var rec = new PathRecorder();
            ServerInstance? killed = null;
            var before = new Dictionary<ServerInstance, int>();
            await foreach (var r in backend.TraceAsync(longTrace, CancellationToken.None))
            {
                rec.Add(r);
                if (killed is null && r.UpdateCase == TracePathResponse.UpdateOneofCase.Point && r.Point.Index == 10)
                {
                    killed = Assert.Single(servers, s => s.ActiveAnalyses > 0); // the trace is still running there
                    foreach (var s in servers.Where(s => s != killed)) before[s] = s.TraceCalls;
                    await killed.KillAsync();
                    output.WriteLine($"killed instance {servers.IndexOf(killed)} at point 10 after {clock.Elapsed.TotalSeconds:F1} s");
                }
            }
            Assert.NotNull(killed);
            Traces.AssertSamePath(longRef, rec, "long trace restarted after the loss of its instance");
            Assert.Equal(longRef.Points.Count, rec.Points.Select(p => p.Index).Distinct().Count());
            // The restart happened on a surviving instance.
            int restarts = 0;
            foreach (var (s, n) in before) restarts += s.TraceCalls - n;
            Assert.Equal(1, restarts);
            output.WriteLine($"done after {clock.Elapsed.TotalSeconds:F1} s");
        }
        finally
        {
            foreach (var s in servers) await s.DisposeAsync();
        }
    }
}
