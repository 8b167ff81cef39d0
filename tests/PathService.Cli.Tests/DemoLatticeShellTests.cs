using System.Xml.Linq;
using PathService.Cli.Backends;
using PathService.Cli.Output;
using PathService.Contracts.V1;

namespace PathService.Cli.Tests;

/// <summary>
/// The rigid-jointed demo (examples/pavilion-lattice-shell.json) as a user sends it: the loaded centre snaps through its
/// limit point and the trace follows the unstable stretch to the second limit point and on to the inverted, stable
/// shape; the pictures and the beam force table come out of the same recording.
/// </summary>
public class DemoLatticeShellTests
{
    /// <summary>
    /// λ_cr of the two limit points (our own scenario, no outside value) located by the engine with a tolerance of 1e-13
    /// and a residual tolerance of 1e-12 (the demo request with those two controls changed, run through `pathtrace trace
    /// --summary`; estimated errors 4.4e-17 and 2.5e-17). The demo's default controls must land within the error each
    /// point states (measured 1.9e-13 and 1.5e-11, stated 8.8e-14 and 5.3e-11), or within 1e-12 where the statement is
    /// below the rounding of states converged to the default residual tolerance.
    /// </summary>
    private const double FirstLimit = 2.130715634119727, SecondLimit = 1.134293605687838, Floor = 1e-12;

    private static void AssertWithinStatedError(double reference, CriticalPoint c) =>
        Assert.True(Math.Abs(c.LoadFactor - reference) <= Math.Max(c.Tolerance * Math.Max(1, Math.Abs(c.LoadFactor)), Floor),
            $"λ_cr {c.LoadFactor:R} vs {reference:R}: difference {Math.Abs(c.LoadFactor - reference):E2}, stated error {c.Tolerance:E2}");

    [Fact]
    public async Task The_lattice_shell_traces_through_its_limit_point_and_snaps_to_the_inverted_shape()
    {
        var request = RequestReader.Read(Repo.Example("pavilion-lattice-shell.json"));
        await using var backend = new InProcessBackend();
        var rec = await Traces.RecordAsync(backend, request);

        var limits = rec.Criticals.Where(c => c.Kind == CriticalPointKind.LimitPoint).ToList();
        Assert.Equal(2, limits.Count);
        var first = rec.Criticals[0];
        Assert.Equal(CriticalPointKind.LimitPoint, first.Kind); // the first critical point is the snap, not a bifurcation
        Assert.True(first.Located, first.LocationNote);
        AssertWithinStatedError(FirstLimit, first);
        AssertWithinStatedError(SecondLimit, limits[1]);
        Assert.Equal((0, 1), (first.NegativePivotsBefore, first.NegativePivotsAfter));

        // Through it: past the first limit point λ falls on unstable points, and after the second it rises again on
        // stable ones to the target, the crown far below where it snapped.
        var after = rec.Points.Where(p => p.Index >= first.PointAfter).ToList();
        Assert.Contains(after, p => p.Stability == Stability.Unstable && p.LoadFactor < first.LoadFactor - 0.5);
        var last = rec.Points[^1];
        Assert.Equal(Stability.Stable, last.Stability);
        Assert.True(last.LoadFactor >= 3.0, $"λ = {last.LoadFactor}");
        Assert.Equal(StopReason.TargetLoadFactorReached, rec.Summary!.Reason);
        double crownAtSnap = first.Monitored[0].Value, crownAtEnd = last.Monitored[0].Value;
        Assert.True(crownAtEnd < 5 * crownAtSnap && crownAtEnd < -1.0, $"crown at the snap {crownAtSnap}, at the end {crownAtEnd}");

        // The last point carries the state: every element of every subdivided tube, drawn as a frame member.
        Assert.Equal(144, last.State.BeamElements.Count);
        Assert.Equal(37 + 72, last.State.Nodes.Count);
        var svg = XDocument.Parse(Pictures.Shape(request, rec, null, null)!);
        Assert.Equal(2 * 144, svg.Descendants().Count(e => (string?)e.Attribute("class") == "frame-deformed"));
        Assert.Contains(svg.Descendants(), e => (string?)e.Attribute("class") == "moment-ring");
        Assert.Contains("rotation J1-00.rotation_y [rad]", Pictures.Curve(request, rec, 2));
        var table = rec.BeamForcesCsv("kN", "m")!.TrimEnd().Split('\n');
        int states = rec.Points.Count(p => p.State is not null) + rec.Criticals.Count(c => c.State is not null); // path points, then critical points
        Assert.Equal(1 + states * 144 * 2, table.Length);
    }
}
