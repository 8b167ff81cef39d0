using PathService.Engine.Continuation;
using PathService.Engine.Elements;
using PathService.Engine.Model;

namespace PathService.Engine.Tests.Verification;

/// <summary>Tension-only cables, elastic-perfectly-plastic bars and the Euler check, against closed forms.</summary>
public class MemberBehaviorTests
{
    private const double E = 1.6e8, A = 2.0e-4, L = 5.0;

    /// <summary>
    /// A node held between two pretensioned cables along x (anchors at x = ∓L), pulled along +x by P. With the Total
    /// Lagrangian bar the right cable's stress is S0 + E(−u/L + u²/(2L²)), zero at u_s = L(1 − √(1 − 2S0/E)); the left
    /// cable then carries P = A(S0 + E(u/L + u²/(2L²)))(L + u)/L alone (our derivation; in small-displacement terms
    /// P_slack = 2·A·S0, e.g. any cable-net text such as H. A. Buchholdt, "An Introduction to Cable Roof Structures", 1999, from memory).
    /// </summary>
    [Fact]
    public void Pretensioned_cable_goes_slack_at_the_derived_load()
    {
        const double s0 = 2.0e5; // 200 MPa pretension in kN/m²
        var def = new ModelDefinition
        {
            Nodes = [new("west", -L, 0, 0), new("ring", 0, 0, 0), new("east", L, 0, 0)],
            Bars =
            [
                new("cable-w", "west", "ring", E, A, s0) { Behavior = BarBehavior.TensionOnly },
                new("cable-e", "ring", "east", E, A, s0) { Behavior = BarBehavior.TensionOnly },
            ],
            Supports = [.. TestModels.Pin("west"), .. TestModels.Pin("east"), new("ring", Axis.Y), new("ring", Axis.Z)],
            Loads = LoadCaseDefinition.ReferenceOnly(new NodalLoad("ring", 1.0, 0, 0)),
        };
        var ring = new DofReference("ring", Axis.X);
        var events = new PathTracer(StructuralModel.Create(def), new SolverControls
        {
            Method = ContinuationMethod.DisplacementControl, ControlDof = ring, InitialDisplacementIncrement = 1e-3,
            TargetDisplacement = 0.03, Monitored = [ring], ResidualTolerance = 1e-12, MaxPoints = 500,
        }).Trace().ToList();

        double us = L * (1 - Math.Sqrt(1 - 2 * s0 / E));
        double pSlack = A * (s0 + E * (us / L + us * us / (2 * L * L))) * (L + us) / L;
        var slack = Assert.Single(events.OfType<MemberEvent>(), e => e.Kind == MemberEventKind.Slack);
        Assert.Equal("cable-e", slack.BarId);
        Assert.Equal(pSlack, slack.OnsetLoadFactor, 1e-4 * pSlack);
        Assert.True(slack.LoadFactor >= pSlack);
        // Before the slack point both cables work (stiffness 2EA/L); after it only one (EA/L): the path follows the closed form.
        foreach (var p in events.OfType<PathPoint>().Where(p => p.Monitored[0] > us + 1e-9))
        {
            double u = p.Monitored[0];
            double expected = A * (s0 + E * (u / L + u * u / (2 * L * L))) * (L + u) / L;
            Assert.Equal(expected, p.LoadFactor, 1e-8 * expected);
        }
    }

    /// <summary>
    /// A bar of yield stress σy pulled along its axis: it yields when S = σy (Green-Lagrange strain ε_y = σy/E, current
    /// length ℓ = L√(1 + 2ε_y)), at P = Aσy·ℓ/L; afterwards S stays at σy and the force grows only with ℓ.
    /// (Elastic-perfectly-plastic return map, J. C. Simo and T. J. R. Hughes, "Computational Inelasticity", 1998, §1.2 (from memory).)
    /// </summary>
    [Fact]
    public void Bar_yields_at_its_yield_stress_and_stays_on_the_yield_surface()
    {
        const double sy = 3.55e5; // 355 MPa
        var def = new ModelDefinition
        {
            Nodes = [new("anchor", 0, 0, 0), new("end", L, 0, 0)],
            Bars = [new("tie", "anchor", "end", E, A) { YieldStress = sy }],
            GroundSprings = [new GroundSpringDefinition("guide", "end", Axis.X, 1e-9 * E * A / L)],
            Supports = [.. TestModels.Pin("anchor"), new("end", Axis.Y), new("end", Axis.Z)],
            Loads = LoadCaseDefinition.ReferenceOnly(new NodalLoad("end", 1.0, 0, 0)),
        };
        var end = new DofReference("end", Axis.X);
        var events = new PathTracer(StructuralModel.Create(def), new SolverControls
        {
            Method = ContinuationMethod.DisplacementControl, ControlDof = end, InitialDisplacementIncrement = 2e-3,
            TargetDisplacement = 0.05, Monitored = [end], ResidualTolerance = 1e-12, MaxPoints = 500, FullStateEvery = 1,
        }).Trace().ToList();

        double ey = sy / E, uy = L * (Math.Sqrt(1 + 2 * ey) - 1);
        double py = A * sy * (L + uy) / L;
        var yield = Assert.Single(events.OfType<MemberEvent>(), e => e.Kind == MemberEventKind.Yield);
        Assert.Equal(py, yield.OnsetLoadFactor, 1e-3 * py);
        Assert.Equal(1.0, yield.Utilization, 1e-9);
        foreach (var p in events.OfType<PathPoint>().Where(p => p.Monitored[0] > uy + 1e-9))
        {
            double ell = L + p.Monitored[0];
            // S = σy exactly on the yield surface; the tiny guide spring adds k·u.
            Assert.Equal(A * sy * ell / L + 1e-9 * E * A / L * p.Monitored[0], p.LoadFactor, 1e-9 * p.LoadFactor);
        }
    }

    /// <summary>The Euler check flags a strut when its compression reaches π²EI/(KL)² (L. Euler, 1744).</summary>
    [Fact]
    public void Strut_is_flagged_when_its_compression_reaches_the_Euler_load()
    {
        const double I = 8.0e-7, K = 1.0;
        double euler = Math.PI * Math.PI * E * I / (K * L * K * L);
        var def = new ModelDefinition
        {
            Nodes = [new("base", 0, 0, 0), new("top", 0, 0, L)],
            Bars = [new("strut", "base", "top", E, A) { SecondMoment = I }],
            Supports = [.. TestModels.Pin("base"), new("top", Axis.X), new("top", Axis.Y)],
            Loads = LoadCaseDefinition.ReferenceOnly(new NodalLoad("top", 0, 0, -1.0)),
        };
        var events = new PathTracer(StructuralModel.Create(def), new SolverControls
        {
            Method = ContinuationMethod.LoadControl, InitialLoadIncrement = euler / 7, TargetLoadFactor = 1.5 * euler, MaxIncrementRatio = 1,
        }).Trace().ToList();
        var buckle = Assert.Single(events.OfType<MemberEvent>(), e => e.Kind == MemberEventKind.Buckle);
        Assert.Equal("strut", buckle.BarId);
        // The bar force equals the load here, so the interpolated onset is the Euler load itself.
        Assert.Equal(euler, buckle.OnsetLoadFactor, 1e-6 * euler);
    }
}
