using PathService.Client.Building;
using PathService.Client.Calls;
using PathService.Contracts.V1;

namespace PluginClient;

/// <summary>
/// What a geometry-tool plug-in does with the client library: the designer's canopy arrives as line segments (here a
/// shallow two-way grid of our own, drawn with small gaps at the joints as exported geometry often has), they become
/// nodes and bars, the perimeter is pinned, the inner joints carry the reference load, and the trace streams until the
/// first critical point. Run: dotnet run --project examples/plugin-client -- http://127.0.0.1:5180 [api-key]
/// </summary>
public static class Program
{
    public static async Task<int> Main(string[] args)
    {
        var address = new Uri(args.Length > 0 ? args[0] : "http://127.0.0.1:5180");
        string? key = args.Length > 1 ? args[1] : Environment.GetEnvironmentVariable("PATHSERVICE_API_KEY");
        var result = await RunAsync(new ConnectionOptions { Addresses = [address], ApiKey = key }, Console.Out, CancellationToken.None);
        return result is null ? 1 : 0;
    }

    /// <summary>Segments of a 4 × 4 grid canopy, 12 m square, 0.6 m rise at the centre; joints drawn 0.3 mm apart.</summary>
    public static List<LineSegment> CanopySegments()
    {
        const int cells = 4;
        const double side = 12, rise = 0.6;
        double Z(double x, double y) => rise * (1 - Math.Pow(2 * x / side - 1, 2)) * (1 - Math.Pow(2 * y / side - 1, 2));
        var segments = new List<LineSegment>();
        double h = side / cells, gap = 3e-4;
        for (int i = 0; i <= cells; i++)
        for (int j = 0; j <= cells; j++)
        {
            double x = i * h, y = j * h;
            if (i < cells) segments.Add(new(x + gap, y, Z(x, y), x + h, y, Z(x + h, y)));
            if (j < cells) segments.Add(new(x, y + gap, Z(x, y), x, y + h, Z(x, y + h)));
            if (i < cells && j < cells) segments.Add(new(x, y, Z(x, y), x + h - gap, y + h, Z(x + h, y + h)));
        }
        return segments;
    }

    /// <returns>The first critical point, or null when the trace ended without one.</returns>
    public static async Task<CriticalPoint?> RunAsync(ConnectionOptions options, TextWriter output, CancellationToken ct)
    {
        // Steel tubes, E in kN/m², A in m², loads in kN: one consistent unit system (the service does not convert).
        var mesh = new SegmentMesher(tolerance: 1e-3).Mesh(CanopySegments(), elasticModulus: 2.1e8, area: 6e-4);
        foreach (var issue in mesh.Issues) output.WriteLine($"geometry: {issue.Message}");
        var builder = new ModelBuilder("canopy 4x4").Mesh(mesh);
        string? crown = null;
        foreach (var node in mesh.Nodes)
        {
            bool edge = node.X < 1e-6 || node.Y < 1e-6 || node.X > 12 - 1e-3 || node.Y > 12 - 1e-3;
            if (edge) builder.Support(node.Id);
            else builder.ReferenceLoad(node.Id, 0, 0, -1);
            if (Math.Abs(node.X - 6) < 1e-3 && Math.Abs(node.Y - 6) < 1e-3) crown = node.Id;
        }
        var crownZ = new DofRef { Node = crown!, Direction = Direction.Z };
        var request = builder.TraceRequest(new SolverControls
        {
            Method = ContinuationMethod.ArcLength, InitialLoadIncrement = 2, MaxPoints = 300, StopAtFirstCriticalPoint = true, Monitored = { crownZ },
        });
        output.WriteLine($"{mesh.Nodes.Count} nodes, {mesh.Bars.Count} bars; tracing on {options.Addresses[0]}");
        await using var connection = new PathServiceConnection(options);
        CriticalPoint? first = null;
        await foreach (var update in connection.TraceAsync(request, ct))
        {
            switch (update.UpdateCase)
            {
                case TracePathResponse.UpdateOneofCase.Point:
                    output.WriteLine($"  λ = {update.Point.LoadFactor,10:F4}   crown z = {update.Point.Monitored[0].Value,10:F5} m");
                    break;
                case TracePathResponse.UpdateOneofCase.CriticalPoint:
                    first ??= update.CriticalPoint;
                    output.WriteLine($"critical point: {update.CriticalPoint.Kind} at λ = {update.CriticalPoint.LoadFactor:G10} (located: {update.CriticalPoint.Located})");
                    break;
                case TracePathResponse.UpdateOneofCase.Summary:
                    output.WriteLine($"trace ended: {update.Summary.Message}");
                    break;
            }
        }
        output.WriteLine("Results aid a qualified engineer's judgement; check them against local codes and licensed practice, and verify input units.");
        return first;
    }
}
