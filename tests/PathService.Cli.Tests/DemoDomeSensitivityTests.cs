using PathService.Cli;
using PathService.Contracts.Mapping;
using PathService.Engine.Continuation;
using PathService.Engine.Model;

namespace PathService.Cli.Tests;

/// <summary>
/// The demo dome (examples/market-hall-dome.json) as a user sends it: the sensitivities of its first limit point against
/// central differences of the re-traced, re-located critical load, for a sample of member areas and node coordinates.
/// Central differences are the outside reference (they only trace); the issue asks for agreement to 1e-5, the tests assert
/// an order above the agreement measured.
/// </summary>
public class DemoDomeSensitivityTests
{
    [Fact]
    public void Sensitivities_of_the_demo_domes_first_limit_point_match_central_differences()
    {
        var request = RequestReader.Read(Repo.Example("market-hall-dome.json"));
        var baseline = ModelMapper.ToDefinition(request.Model, request.LoadCase);
        var controls = ControlsMapper.ToControls(request.Controls) with
        {
            StopAtFirstCriticalPoint = true, FullStateAtCriticalPoints = true, ResidualTolerance = 1e-12, CriticalPointTolerance = 1e-13,
            TargetLoadFactor = null,
        };
        CriticalPoint First(ModelDefinition def, bool sensitivities = false) =>
            new PathTracer(StructuralModel.Create(def), controls with { DesignSensitivities = sensitivities }).Trace().OfType<CriticalPoint>().First();
        var cp = First(baseline, sensitivities: true);
        Assert.Equal(CriticalPointKind.LimitPoint, cp.Kind);
        var s = cp.Sensitivity!;
        Assert.True(s.Defined, s.Note);
        foreach (int b in new[] { 0, baseline.Bars.Count / 3, baseline.Bars.Count - 1 })
        {
            double a = baseline.Bars[b].Area, h = 1e-4 * a;
            double Retrace(double area)
            {
                var bars = baseline.Bars.ToArray();
                bars[b] = bars[b] with { Area = area };
                return First(baseline with { Bars = bars }).LoadFactor;
            }
            double fd = (Retrace(a + h) - Retrace(a - h)) / (2 * h);
            double error = Math.Abs(s.BarArea[b] - fd) / Math.Max(Math.Abs(fd), cp.LoadFactor / a);
            // Measured at most 3.7e-10.
            Assert.True(error < 5e-9, $"dλ/dA of {baseline.Bars[b].Id}: {s.BarArea[b]:G10} against {fd:G10} (relative {error:E2})");
        }
        foreach (var (node, axis) in new[] { ("crown", 2), (baseline.Nodes[5].Id, 0) })
        {
            int n = baseline.Nodes.ToList().FindIndex(x => x.Id == node);
            const double h = 1e-4; // m
            double Retrace(double delta)
            {
                var nodes = baseline.Nodes.ToArray();
                var p = nodes[n];
                nodes[n] = axis == 0 ? p with { X = p.X + delta } : p with { Z = p.Z + delta };
                return First(baseline with { Nodes = nodes }).LoadFactor;
            }
            double fd = (Retrace(h) - Retrace(-h)) / (2 * h);
            double error = Math.Abs(s.NodeCoordinates[3 * n + axis] - fd) / (Math.Abs(fd) + cp.LoadFactor);
            // Measured 1.1e-7 (crown z) and 2.3e-10 (ring node x): the step h = 1e-4 m limits the difference quotient.
            Assert.True(error < 1e-6, $"dλ/d{"xyz"[axis]} of {node}: {s.NodeCoordinates[3 * n + axis]:G10} against {fd:G10} (relative {error:E2})");
        }
    }
}
