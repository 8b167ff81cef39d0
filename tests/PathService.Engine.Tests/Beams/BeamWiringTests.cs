using PathService.Engine.Continuation;
using PathService.Engine.Model;

namespace PathService.Engine.Tests.Beams;

/// <summary>Beams in the engine: unknowns per node, mechanisms named by their rotation, moments in loads and results.</summary>
public class BeamWiringTests
{
    [Fact]
    public void A_node_left_free_to_rotate_is_named_with_its_rotation()
    {
        // The tip joins one beam end that holds torsion but releases both bendings: nothing resists the tip's rotation
        // about global y and z (local y = global y, z = global z for a member along x with orientation +y).
        var def = BeamModels.Cantilever(3.0, 10) with
        {
            Beams = [BeamModels.Cantilever(3.0, 10).Beams[0] with { EndReleases = new(Torsion: false, BendingY: true, BendingZ: true) }],
        };
        var model = StructuralModel.Create(def);
        Assert.True(model.Dofs.Rotates(model.NodeIndex("tip")));
        var ex = Assert.Throws<MechanismException>(() => new PathTracer(model, new SolverControls()).Trace().First());
        Assert.Equal("tip", ex.NodeId);
        Assert.Contains(ex.Direction, new[] { Axis.RotationY, Axis.RotationZ });
        Assert.Contains("rotate about", ex.Message);
    }

    [Fact]
    public void A_rotational_support_removes_that_mechanism()
    {
        var def = BeamModels.Cantilever(3.0, 10) with
        {
            Beams = [BeamModels.Cantilever(3.0, 10).Beams[0] with { EndReleases = new(Torsion: false, BendingY: true, BendingZ: true) }],
            Supports = [.. BeamModels.Fixed("root"), new("tip", Axis.RotationY), new("tip", Axis.RotationZ)],
        };
        var points = new PathTracer(StructuralModel.Create(def), new SolverControls { MaxPoints = 2 }).Trace().OfType<PathPoint>().ToList();
        Assert.Equal(2, points.Count);
    }

    [Fact]
    public void Pinned_beams_between_bar_joints_add_no_rotations()
    {
        var truss = TestModels.TwoBarTruss(4, 0.35, 2.4e5, 10);
        var def = truss with
        {
            Bars = [],
            Beams = truss.Bars.Select(b => new BeamDefinition(b.Id, b.StartNode, b.EndNode, b.ElasticModulus, 0.4 * b.ElasticModulus, b.Area,
                1e-6, 1e-6, 2e-6, (0, 0, 1)) { StartReleases = BeamEndReleases.Pinned, EndReleases = BeamEndReleases.Pinned }).ToList(),
        };
        var model = StructuralModel.Create(def);
        Assert.False(model.Dofs.HasRotations);
        Assert.Equal(9, model.Dofs.FullCount);
    }

    private const double B = 4.0, H = 0.35, EA = 2.4e5, PRef = 10.0;

    private static ModelDefinition PinnedBeamTruss() => BeamModels.WithBarsAsPinnedBeams(TestModels.TwoBarTruss(B, H, EA, PRef));

    /// <summary>
    /// Beams released in every rotation at both ends excite no rotation, and their axial law is the bar's (the kernel's
    /// Green–Lagrange law N = EA·ε·l/L0), so the two-bar truss made of them has the bar truss's closed form
    /// P(w) = (EA/L0³)·w(w − h)(w − 2h) and its limit points ±2EAh³/(3√3 L0³) (theory §6.1).
    /// </summary>
    [Fact]
    public void Pinned_beams_follow_the_bar_truss_closed_form_through_both_limit_points()
    {
        var model = StructuralModel.Create(PinnedBeamTruss());
        var controls = BeamModels.ThroughBothLimitPoints(H);
        var events = new PathTracer(model, controls).Trace().ToList();
        double l0 = Math.Sqrt(B * B + H * H), pLimit = 2 * EA * H * H * H / (3 * Math.Sqrt(3) * l0 * l0 * l0);
        var criticals = events.OfType<CriticalPoint>().ToList();
        Assert.Equal(2, criticals.Count);
        Assert.All(criticals, c => Assert.Equal(CriticalPointKind.LimitPoint, c.Kind));
        // Same tolerances as the bar truss (TwoBarTrussTests): the location tolerance is 1e-10, the residual 1e-12.
        Assert.Equal(pLimit / PRef, criticals[0].LoadFactor, 1e-6 * pLimit / PRef);
        Assert.Equal(-pLimit / PRef, criticals[1].LoadFactor, 1e-6 * pLimit / PRef);
        foreach (var p in events.OfType<PathPoint>())
        {
            double w = -p.Monitored[0];
            double closed = EA / (l0 * l0 * l0) * w * (w - H) * (w - 2 * H);
            Assert.True(Math.Abs(p.LoadFactor * PRef - closed) / pLimit < 1e-6, $"point {p.Index}: λP = {p.LoadFactor * PRef}, closed form {closed}");
        }
    }

    /// <summary>
    /// A cantilever whose root rotation about y is held by a rotational spring k: tip deflection PL³/(3EI) + PL²/k, root
    /// moment PL (elementary beam theory; the load is small enough for the linear answer to hold to 1e-6).
    /// </summary>
    [Fact]
    public void Rotational_spring_and_moments_in_the_results_match_the_linear_cantilever()
    {
        const double length = 2.0, p = 1e-3, k = 500.0;
        var cantilever = BeamModels.Cantilever(length, p);
        var def = cantilever with
        {
            Supports = [.. BeamModels.Fixed("root").Where(s => s.Direction != Axis.RotationY)],
            GroundSprings = [new GroundSpringDefinition("root-spring", "root", Axis.RotationY, k)],
        };
        var controls = new SolverControls
        {
            Method = ContinuationMethod.LoadControl,
            InitialLoadIncrement = 1.0,
            TargetLoadFactor = 1.0,
            ResidualTolerance = 1e-12,
            FullStateEvery = 1,
            Monitored = [new DofReference("tip", Axis.Z), new DofReference("root", Axis.RotationY)],
        };
        var last = new PathTracer(StructuralModel.Create(def), controls).Trace().OfType<PathPoint>().Last();
        double ei = BeamModels.E * BeamModels.Iy;
        double expected = p * length * length * length / (3 * ei) + p * length * length / k;
        Assert.Equal(-expected, last.Monitored[0], RELATIVE * expected);
        Assert.Equal(p * length / k, last.Monitored[1], RELATIVE * p * length / k);
        // Member-end actions (on the member, local axes = global here): at the root the support pushes up by P and turns
        // it by −PL about y (the load's moment about the root is +PL); at the tip the load, −P, and no moment.
        var ends = last.State!.BeamEndForces;
        Assert.Equal(12, ends.Length);
        Assert.Equal(p, ends[2], RELATIVE * p);
        Assert.Equal(-p * length, ends[4], RELATIVE * p * length);
        Assert.Equal(-p, ends[8], RELATIVE * p);
        Assert.Equal(0, ends[10], 1e-9 * p * length);
    }

    // Measured: relative differences up to 2.5e-11 (the geometric nonlinearity left at this load); bound ten times that.
    private const double RELATIVE = 3e-10;
}
