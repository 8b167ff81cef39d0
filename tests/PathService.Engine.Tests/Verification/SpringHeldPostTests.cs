using PathService.Engine.Analyses;
using PathService.Engine.Continuation;
using PathService.Engine.Model;

namespace PathService.Engine.Tests.Verification;

/// <summary>
/// A vertical bar of length L pinned at its base, its top held by a lateral spring k and loaded axially by P.
/// Small-displacement theory gives the bifurcation load P_cr = kL (rigid-bar column on a spring; e.g. Z. P. Bažant and
/// L. Cedolin, "Stability of Structures", 1991, §1.1 (from memory), and the linearised buckling analysis below).
/// With the Total Lagrangian bar the post first shortens to ℓ; the lateral stiffness at the top is k + A S/L0 and the
/// axial equilibrium gives A S = −P L0/ℓ, so the tangent becomes singular at P = kℓ. Axial equilibrium
/// P = (EA/(2L0³))(L0² − ℓ²)ℓ then gives ℓ² = L0²(1 − 2kL0/EA), so
///     P_cr = kL0·√(1 − 2kL0/EA) ≈ kL0(1 − kL0/EA),
/// a correction of relative size kL0/EA from axial shortening (our derivation, docs/theory.md).
/// </summary>
public class SpringHeldPostTests
{
    private const double L = 3.0, EA = 5.0e4, K = 40.0, PRef = 10.0;

    private static List<PathEvent> Trace() =>
        new PathTracer(StructuralModel.Create(TestModels.SpringHeldPost(L, EA, K, PRef)), new SolverControls
        {
            InitialLoadIncrement = 1.0, TargetLoadFactor = 15, MaxPoints = 200, ResidualTolerance = 1e-12,
            Monitored = [new DofReference("top", Axis.Y), new DofReference("top", Axis.X)],
        }).Trace().ToList();

    [Fact]
    public void Bifurcation_is_found_at_the_spring_load_corrected_for_axial_shortening()
    {
        var events = Trace();
        var cp = Assert.Single(events.OfType<CriticalPoint>());
        Assert.Equal(CriticalPointKind.Bifurcation, cp.Kind);
        Assert.True(cp.Located);
        double exact = K * L * Math.Sqrt(1 - 2 * K * L / EA) / PRef;
        Assert.Equal(exact, cp.LoadFactor, 1e-7 * exact);
        // The correction is real and of the derived size: about kL/EA = 0.24 % below kL.
        Assert.True(cp.LoadFactor < K * L / PRef);
        Assert.Equal(K * L / EA, 1 - cp.LoadFactor / (K * L / PRef), 0.02 * K * L / EA);
        Assert.True(cp.LoadAlignment < 1e-6);
        // The critical mode is the lateral sway of the top.
        Assert.Equal(1.0, Math.Abs(cp.Mode[3 * 1 + 0]), 1e-6);
        // Past the bifurcation the primary path is unstable.
        Assert.Equal(Continuation.Stability.Unstable, events.OfType<PathPoint>().Last().Stability);
    }

    [Fact]
    public void Linearised_buckling_gives_the_spring_load_kL()
    {
        var result = LinearBucklingAnalysis.Run(StructuralModel.Create(TestModels.SpringHeldPost(L, EA, K, PRef)), modeCount: 1);
        Assert.Equal(K * L / PRef, result.Modes[0].LoadFactor, 1e-9 * K * L / PRef);
        Assert.Equal(1.0, Math.Abs(result.Modes[0].Shape[3]), 1e-9);
        var traced = Trace().OfType<CriticalPoint>().Single().LoadFactor;
        // The traced bifurcation matches the linearised load within the axial-shortening correction kL/EA.
        Assert.Equal(result.Modes[0].LoadFactor, traced, 1.5 * K * L / EA * result.Modes[0].LoadFactor);
    }
}
