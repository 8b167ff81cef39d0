using Grpc.Core;
using PathService.Client.Building;
using PathService.Client.Calls;
using PathService.Contracts.V1;

namespace PathService.Client.Tests;

/// <summary>The library against a real server on loopback.</summary>
public class ConnectionTests
{
    // A shallow pitched rafter pair of our own, drawn as two segments whose ridge ends miss each other by 0.2 mm, as
    // a geometry tool might export them. Half-span b = 3, rise h = 0.24, EA = 2.1e8 · 8e-4.
    private const double B = 3.0, H = 0.24, E = 2.1e8, A = 8e-4;

    private static TracePathRequest RafterTrace()
    {
        var mesh = new SegmentMesher(1e-3, nodePrefix: "p").Mesh([new LineSegment(-B, 0, 0, 0, H, 0), new LineSegment(0.0002, H, 0, B, 0, 0)], E, A);
        Assert.Equal(3, mesh.Nodes.Count);
        string ridge = mesh.Bars[0].EndNode;
        var builder = new ModelBuilder("rafter pair").Mesh(mesh)
            .Support(mesh.Bars[0].StartNode).Support(mesh.Bars[1].EndNode).Support(ridge, Direction.X, Direction.Z)
            .ReferenceLoad(ridge, 0, -1, 0);
        var ridgeY = new DofRef { Node = ridge, Direction = Direction.Y };
        return builder.TraceRequest(new SolverControls
        {
            Method = ContinuationMethod.ArcLength, InitialLoadIncrement = 5, MaxPoints = 200, Monitored = { ridgeY },
            TargetDisplacementDof = ridgeY, TargetDisplacement = -0.3,
        });
    }

    [Fact]
    public async Task A_trace_built_from_segments_finds_the_limit_load_of_the_closed_form()
    {
        await using var server = await LoopbackServer.StartAsync();
        await using var connection = new PathServiceConnection(new ConnectionOptions { Addresses = [server.GrpcUrl] });
        var updates = new List<TracePathResponse>();
        await foreach (var u in connection.TraceAsync(RafterTrace())) updates.Add(u);
        Assert.Equal(TracePathResponse.UpdateOneofCase.Summary, updates[^1].UpdateCase);
        var limit = updates.First(u => u.UpdateCase == TracePathResponse.UpdateOneofCase.CriticalPoint).CriticalPoint;
        Assert.Equal(CriticalPointKind.LimitPoint, limit.Kind);
        // Total Lagrangian two-bar truss: P_L = 2EA h³ / (3√3 L0³) (closed form derived in docs/theory.md; the
        // example is the von Mises truss, e.g. Crisfield 1991, Vol. 1, §3.1, from memory). The load is 1 kN, so λ = P.
        double l0 = Math.Sqrt(B * B + H * H);
        double closedForm = 2 * E * A * H * H * H / (3 * Math.Sqrt(3) * l0 * l0 * l0);
        Assert.True(Math.Abs(limit.LoadFactor - closedForm) / closedForm < 1e-12, $"λ_L = {limit.LoadFactor}, closed form {closedForm}");
    }

    [Fact]
    public async Task The_library_stream_equals_the_generated_client_stream_bit_for_bit()
    {
        await using var server = await LoopbackServer.StartAsync();
        await using var connection = new PathServiceConnection(new ConnectionOptions { Addresses = [server.GrpcUrl] });
        var viaLibrary = new List<TracePathResponse>();
        await foreach (var u in connection.TraceAsync(RafterTrace())) viaLibrary.Add(u);
        using var raw = connection.Paths.TracePath(RafterTrace());
        var direct = new List<TracePathResponse>();
        while (await raw.ResponseStream.MoveNext(CancellationToken.None)) direct.Add(raw.ResponseStream.Current);
        Assert.Equal(direct.Count, viaLibrary.Count);
        for (int i = 0; i < direct.Count; i++)
        {
            if (direct[i].UpdateCase == TracePathResponse.UpdateOneofCase.Summary) continue; // wall times differ
            Assert.Equal(direct[i], viaLibrary[i]);
        }
    }

    [Fact]
    public async Task The_api_key_is_sent_on_every_call_and_a_missing_key_is_refused()
    {
        await using var server = await LoopbackServer.StartAsync("Security:ApiKeys:Keys:0:Name=plugin", "Security:ApiKeys:Keys:0:Key=plugin-key-5e31");
        await using var keyed = new PathServiceConnection(new ConnectionOptions { Addresses = [server.GrpcUrl], ApiKey = "plugin-key-5e31" });
        var check = await keyed.CheckAsync(new CheckModelRequest { Model = RafterTrace().Model, LoadCase = RafterTrace().LoadCase });
        Assert.True(check.Valid, string.Join("; ", check.Findings.Select(f => f.Message)));
        int points = 0;
        TracePathResponse last = null!;
        await foreach (var u in keyed.TraceAsync(RafterTrace()))
        {
            if (u.UpdateCase == TracePathResponse.UpdateOneofCase.Point) points++;
            last = u;
        }
        Assert.True(points > 5, last.ToString());

        await using var anonymous = new PathServiceConnection(new ConnectionOptions { Addresses = [server.GrpcUrl] });
        var ex = await Assert.ThrowsAsync<RpcException>(() => anonymous.CheckAsync(new CheckModelRequest { Model = RafterTrace().Model }));
        Assert.Equal(StatusCode.Unauthenticated, ex.StatusCode);
    }

    [Fact]
    public async Task Cancelling_the_token_ends_the_stream_with_cancelled()
    {
        await using var server = await LoopbackServer.StartAsync();
        await using var connection = new PathServiceConnection(new ConnectionOptions { Addresses = [server.GrpcUrl] });
        var request = RafterTrace();
        request.Controls.InitialLoadIncrement = 0.01;
        request.Controls.MaxIncrementRatio = 1;
        request.Controls.MaxPoints = 5000;
        request.Controls.ClearTargetDisplacement();
        request.Controls.TargetDisplacementDof = null;
        using var cts = new CancellationTokenSource();
        int seen = 0;
        var ex = await Assert.ThrowsAnyAsync<Exception>(async () =>
        {
            await foreach (var u in connection.TraceAsync(request, cts.Token))
                if (++seen == 3) cts.Cancel();
        });
        Assert.True(ex is OperationCanceledException || ex is RpcException { StatusCode: StatusCode.Cancelled }, ex.ToString());
        Assert.InRange(seen, 3, 5);
    }
}
