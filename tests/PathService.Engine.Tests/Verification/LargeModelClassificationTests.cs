using PathService.Engine.Continuation;
using PathService.Engine.Model;

namespace PathService.Engine.Tests.Verification;

/// <summary>
/// Classification that does not depend on the size of the model: a roof of 10,000 loaded columns with a local
/// snap-through (the skylight, load alignment ≈ 1e-4, below the old fixed threshold 1e-3) and a global sway bifurcation
/// (<see cref="TestModels.ColumnRoofWithSkylight"/>). Closed forms: the two-bar truss limit load 2EAh³/(3√3 L0³)
/// (<see cref="TwoBarTrussTests"/>) and the spring-held post P_cr = kL√(1 − 2kL/EA) (<see cref="SpringHeldPostTests"/>)
/// with k the column's tie and its share of the deck brace in series, all derived in docs/theory.md.
/// </summary>
public class LargeModelClassificationTests
{
    private const int Columns = 10_000;
    private const double L = 3.0, EA = 5.0e4, K = 40.0, P = 10.0, Tie = 400.0;
    private const double B = 4.0, H = 0.35, EASky = 2000.0, PSky = 0.1;

    [Fact]
    public void Local_snap_through_is_a_limit_point_and_global_sway_a_bifurcation_on_a_roof_of_10000_loaded_nodes()
    {
        var def = TestModels.ColumnRoofWithSkylight(Columns, L, EA, K, Tie, P, B, H, EASky, PSky);
        double l0 = Math.Sqrt(B * B + H * H);
        double lambdaSnap = 2 * EASky * H * H * H / (3 * Math.Sqrt(3) * l0 * l0 * l0) / PSky;
        // Each column's tie (k_tie) acts in series with its share k of the deck brace: k_eff = k·k_tie/(k + k_tie).
        double kEff = K * Tie / (K + Tie);
        double lambdaSway = kEff * L * Math.Sqrt(1 - 2 * kEff * L / EA) / P;
        var events = new PathTracer(StructuralModel.Create(def), new SolverControls
        {
            InitialLoadIncrement = 1.0, MaxPoints = 150, TargetLoadFactor = 13,
            Monitored = [new DofReference("sky-apex", Axis.Y)],
        }).Trace().ToList();
        var cps = events.OfType<CriticalPoint>().ToList();
        Assert.True(cps.Count == 3, string.Join("; ", cps.Select(c => $"{c.Kind} λ={c.LoadFactor} align {c.LoadAlignment:E2}")) + " / " + ((PathSummary)events[^1]).Message);
        // Upper and lower limit point of the skylight (λ = ±λ_snap), then the sway bifurcation.
        Assert.Equal(CriticalPointKind.LimitPoint, cps[0].Kind);
        Assert.Equal(CriticalPointKind.LimitPoint, cps[1].Kind);
        Assert.Equal(CriticalPointKind.Bifurcation, cps[2].Kind);
        Assert.Equal(lambdaSnap, cps[0].LoadFactor, 1e-9 * lambdaSnap);
        Assert.Equal(-lambdaSnap, cps[1].LoadFactor, 1e-9 * lambdaSnap);
        Assert.Equal(lambdaSway, cps[2].LoadFactor, 1e-9 * lambdaSway);
        // The local mode's alignment is p/√(N P² + p²) ≈ 1e-4, below the old fixed threshold 1e-3.
        double expectedAlignment = PSky / Math.Sqrt(Columns * P * P + PSky * PSky);
        Assert.Equal(expectedAlignment, cps[0].LoadAlignment, 1e-3 * expectedAlignment);
        Assert.True(cps[0].LoadAlignment < 1e-3);
        Assert.All(cps, c => Assert.True(c.Located, c.LocationNote));
        InertiaAccounting.AssertAccounted(events);
    }
}
