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
    public void End_moment_rolls_a_cantilever_through_three_quarters_of_a_turn_with_exact_nodal_rotations()
    {
        const int n = 12;
        double theta = 1.5 * Math.PI, moment = theta * BeamModels.E * BeamModels.Iy / L;
        var def = BeamModels.Cantilever(L, 0, n) with { Loads = LoadCaseDefinition.ReferenceOnly(new NodalLoad("tip", 0, 0, 0) { My = moment }) };
        var controls = new SolverControls
        {
            Method = ContinuationMethod.LoadControl,
            InitialLoadIncrement = 0.05,
            MaxIncrementRatio = 1,
            TargetLoadFactor = 1.0,
            ResidualTolerance = 1e-10,
            MaxPoints = 100,
            Monitored = [new DofReference("tip", Axis.X), new DofReference("tip", Axis.Z), new DofReference("tip", Axis.RotationY), new DofReference("c#6", Axis.RotationY)],
        };
        var events = new PathTracer(StructuralModel.Create(def), controls).Trace().ToList();
        Assert.Equal(StopReason.TargetLoadFactorReached, Assert.IsType<PathSummary>(events[^1]).Reason);
        var last = events.OfType<PathPoint>().Last();
        Assert.Equal(1.0, last.LoadFactor, 12);
        // Tip: 3π/2 about +y, stored as the canonical −π/2; mid-length node: 3π/4.
        Assert.Equal(-0.5 * Math.PI, last.Monitored[2], 9);
        Assert.Equal(0.75 * Math.PI, last.Monitored[3], 9);
        // Tip position of the polygon of n chords L/n turned by (k − ½)θ/n about +y (x towards −z).
        double x = 0, z = 0;
        for (int k = 1; k <= n; k++) { x += L / n * Math.Cos((k - 0.5) * theta / n); z -= L / n * Math.Sin((k - 0.5) * theta / n); }
        Assert.Equal(x - L, last.Monitored[0], 9);
        Assert.Equal(z, last.Monitored[1], 9);
    }

    private static ModelDefinition Column(int subdivisions, double bow, double pRef)
    {
        // A vertical pin-ended column: translations held at the base, lateral translations at the top, twist held at both
        // ends. Local y = global x (orientation +x), local z = global y; the weak axis is local z (I_z < I_y).
        var column = BeamModels.Beam("col", "base", "top") with { Orientation = (1, 0, 0), Subdivisions = subdivisions, BowAmplitude = bow, BowPlane = BowPlane.LocalY };
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

    /// <summary>Euler load π²EI/L² of a pin-ended column (L. Euler, 1744; S. P. Timoshenko and J. M. Gere, "Theory of
    /// Elastic Stability", 1961, §2.1, from memory), found as the first bifurcation of the perfect column in 8 elements.</summary>
    [Fact]
    public void Perfect_column_in_eight_elements_bifurcates_at_the_Euler_load()
    {
        var controls = new SolverControls
        {
            Method = ContinuationMethod.ArcLength,
            InitialLoadIncrement = 0.2,
            MaxPoints = 40,
            DetectCriticalPoints = true,
            StopAtFirstCriticalPoint = true,
            CriticalPointTolerance = 1e-9,
            Monitored = [new DofReference("col#4", Axis.X)],
        };
        var cp = new PathTracer(StructuralModel.Create(Column(8, 0, EulerLoad)), controls).Trace().OfType<CriticalPoint>().First();
        Assert.Equal(CriticalPointKind.Bifurcation, cp.Kind);
        Assert.True(cp.Located);
        Assert.Equal(1.0, cp.LoadFactor, 1e-3);
    }

    /// <summary>
    /// A half-sine bow of amplitude a grows under axial load P to a/(1 − P/P_E) at mid-height (the amplification of an
    /// initially curved pin-ended column, Timoshenko and Gere 1961, §1.12, from memory); at P = P_E/2 it has doubled.
    /// </summary>
    [Fact]
    public void Bowed_column_deflection_doubles_at_half_the_Euler_load()
    {
        double a = L / 1000;
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
        // Added deflection a·(P/P_E)/(1 − P/P_E) = a.
        Assert.Equal(a, last.Monitored[0], 0.02 * a);
    }
}
