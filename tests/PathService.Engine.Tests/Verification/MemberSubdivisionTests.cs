using PathService.Engine.Continuation;
using PathService.Engine.Model;
using PathService.Engine.Tests.Beams;

namespace PathService.Engine.Tests.Verification;

/// <summary>
/// Subdivided beam members through the whole engine: large rotations of a cantilever rolled up by an end moment, the
/// Euler load of a pin-ended column divided into elements, and the growth of a bowed column's deflection.
/// </summary>
public class MemberSubdivisionTests
{
    private const double L = 3.0;

    /// <summary>
    /// A cantilever under a constant end moment M about global y bends into a circular arc of curvature M/EI (uniform
    /// moment, elementary beam theory). A corotational element over a linear beam carries a uniform moment with end
    /// rotations ∓θ_e/2 about its chord, θ_e = M·L_e/EI, and no axial force; so node k turns by kθ_e exactly and the
    /// chord of element k points at (k − ½)θ_e: our derivation, theory §14.
    /// </summary>
    [Fact]
    public void End_moment_rolls_a_cantilever_past_half_a_turn_with_exact_nodal_rotations()
    {
        const int n = 12;
        double full = 1.5 * Math.PI, moment = full * BeamModels.E * BeamModels.Iy / L;
        var def = BeamModels.Cantilever(L, 0, n) with { Loads = LoadCaseDefinition.ReferenceOnly(new NodalLoad("tip", 0, 0, 0) { My = moment }) };
        // Arc length: load control's snap-through probe (a linear mid-state, whose chords are shortened by the large
        // rotation of one step) would see compression the path never has.
        var controls = new SolverControls
        {
            Method = ContinuationMethod.ArcLength,
            InitialLoadIncrement = 0.05,
            TargetLoadFactor = 1.0,
            ResidualTolerance = 1e-10,
            MaxPoints = 100,
            Monitored = [new DofReference("tip", Axis.X), new DofReference("tip", Axis.Z), new DofReference("tip", Axis.RotationY), new DofReference("c#6", Axis.RotationY)],
        };
        var events = new PathTracer(StructuralModel.Create(def), controls).Trace().ToList();
        Assert.Equal(StopReason.TargetLoadFactorReached, Assert.IsType<PathSummary>(events[^1]).Reason);
        var points = events.OfType<PathPoint>().ToList();
        Assert.True(points[^1].LoadFactor >= 1.0);
        // Measured: rotations within 3.4e-12 rad, positions within 4.3e-12 m of the closed form (the residual tolerance
        // 1e-10 governs); the tolerance is ten times that.
        const double tol = 5e-11;
        foreach (var p in points)
        {
            double theta = p.LoadFactor * full;
            // Tip turned by θ about +y, stored canonically (θ − 2π past half a turn); the mid-length node by θ/2.
            double canonical = theta > Math.PI ? theta - 2 * Math.PI : theta;
            Assert.Equal(canonical, p.Monitored[2], tol);
            Assert.Equal(0.5 * theta, p.Monitored[3], tol);
            // Tip position of the polygon of n chords L/n turned by (k − ½)θ/n about +y (x towards −z).
            double x = 0, z = 0;
            for (int k = 1; k <= n; k++) { x += L / n * Math.Cos((k - 0.5) * theta / n); z -= L / n * Math.Sin((k - 0.5) * theta / n); }
            Assert.Equal(x - L, p.Monitored[0], tol);
            Assert.Equal(z, p.Monitored[1], tol);
        }
    }

    private static ModelDefinition Column(int subdivisions, double bow, double pRef, double area = BeamModels.A)
    {
        // A vertical pin-ended column: translations held at the base, lateral translations at the top, twist held at both
        // ends. Local y = global x (orientation +x), local z = global y; the weak axis is local z (I_z < I_y).
        var column = BeamModels.Beam("col", "base", "top") with { Orientation = (1, 0, 0), Subdivisions = subdivisions, BowAmplitude = bow, BowPlane = BowPlane.LocalY, Area = area };
        return new ModelDefinition
        {
            Name = "pin-ended column",
            Nodes = [new("base", 0, 0, 0), new("top", 0, 0, L)],
            Beams = [column],
            Supports = [.. TestModels.Pin("base"), new("base", Axis.RotationZ), new("top", Axis.X), new("top", Axis.Y), new("top", Axis.RotationZ)],
            Loads = LoadCaseDefinition.ReferenceOnly(new NodalLoad("top", 0, 0, -pRef)),
        };
    }

    private static readonly double EulerLoad = Math.PI * Math.PI * BeamModels.E * BeamModels.Iz / (L * L);

    private static CriticalPoint FirstCritical(int subdivisions, double area = BeamModels.A)
    {
        var controls = new SolverControls
        {
            Method = ContinuationMethod.ArcLength,
            InitialLoadIncrement = 0.2,
            MaxPoints = 40,
            DetectCriticalPoints = true,
            StopAtFirstCriticalPoint = true,
            CriticalPointTolerance = 1e-9,
            Monitored = [new DofReference($"col#{subdivisions / 2}", Axis.X)],
        };
        return new PathTracer(StructuralModel.Create(Column(subdivisions, 0, EulerLoad, area)), controls).Trace().OfType<CriticalPoint>().First();
    }

    /// <summary>
    /// Euler load π²EI/L² of a pin-ended column (L. Euler, 1744; S. P. Timoshenko and J. M. Gere, "Theory of Elastic
    /// Stability", 1961, §2.1, from memory), as the first bifurcation of the perfect column divided into elements. A
    /// two-node corotational element over a linear beam carries the axial force's geometric stiffness by its chord
    /// rotation only, so the discrete load lies above P_E with an error of order (π/n)²; doubling n divides it by four,
    /// and the Richardson extrapolation (4λ₂ₙ − λₙ)/3 recovers P_E. The area is made large (1 m²) so that the shortening
    /// before buckling, which raises the load by a relative amount of order P_E/EA (10⁻³ for the real section), stays
    /// below 10⁻⁵ and the comparison is with the inextensible column of the closed form.
    /// </summary>
    [Fact]
    public void Perfect_column_bifurcates_at_the_Euler_load_as_its_elements_are_refined()
    {
        var c8 = FirstCritical(8, area: 1.0);
        var c16 = FirstCritical(16, area: 1.0);
        Assert.All(new[] { c8, c16 }, c => { Assert.Equal(CriticalPointKind.Bifurcation, c.Kind); Assert.True(c.Located); });
        double e8 = c8.LoadFactor - 1, e16 = c16.LoadFactor - 1;
        Assert.InRange(e8, 0.005, 0.03);
        Assert.InRange(e8 / e16, 3.8, 4.2);
        // Measured: e₈ = 0.01292 (π²/12/64 = 0.01285), ratio 4.013, extrapolation 1 − 1.4e-5 (the next, O(n⁻⁴), term); the
        // tolerance is ten times that.
        Assert.Equal(1.0, (4 * c16.LoadFactor - c8.LoadFactor) / 3, 1.5e-4);
    }

    /// <summary>
    /// A half-sine bow of amplitude a grows under axial load P by a·(P/P_cr)/(1 − P/P_cr) at mid-height (the amplification
    /// of an initially curved pin-ended column, Timoshenko and Gere 1961, §1.12, from memory), with P_cr the bifurcation
    /// load of the same perfect column in the same elements.
    /// </summary>
    [Fact]
    public void Bowed_column_deflection_grows_by_the_amplification_factor()
    {
        double a = L / 1000, critical = FirstCritical(8).LoadFactor;
        var controls = new SolverControls
        {
            Method = ContinuationMethod.LoadControl,
            InitialLoadIncrement = 0.05,
            MaxIncrementRatio = 1,
            TargetLoadFactor = 0.5,
            ResidualTolerance = 1e-10,
            Monitored = [new DofReference("col#4", Axis.X)],
        };
        var last = new PathTracer(StructuralModel.Create(Column(8, a, EulerLoad)), controls).Trace().OfType<PathPoint>().Last();
        Assert.Equal(0.5, last.LoadFactor, 12);
        double r = 0.5 / critical;
        // Measured 3.2e-6·a apart (the nonlinear terms of a small bow, and the bow's piecewise straight initial shape);
        // the tolerance is ten times that.
        Assert.Equal(a * r / (1 - r), last.Monitored[0], 3e-5 * a);
    }
}
