using PathService.Engine.Continuation;
using PathService.Engine.Model;

namespace PathService.Engine.Tests.Verification;

/// <summary>
/// max_located_critical_points: the first critical points are located exactly as without the limit, the path is not
/// changed by it, and every later step across which the count changes is one unresolved entry that costs no location
/// work and still accounts for the step's whole change of the count. Closed forms: the two-bar truss and the
/// spring-held post (derived in docs/theory.md; see <see cref="TwoBarTrussTests"/>, <see cref="SpringHeldPostTests"/>).
/// </summary>
public class LocationLimitTests
{
    private const double B = 4.0, H = 0.35, EA = 2.4e5, PRef = 10.0;

    private static List<PathEvent> TwoBar(int? limit)
    {
        var model = StructuralModel.Create(TestModels.TwoBarTruss(B, H, EA, PRef));
        var controls = new SolverControls
        {
            Method = ContinuationMethod.ArcLength, InitialLoadIncrement = 0.5, ResidualTolerance = 1e-12,
            Monitored = [new DofReference("apex", Axis.Y)],
            TargetDisplacementDof = new DofReference("apex", Axis.Y), TargetDisplacement = -2.3 * H, MaxPoints = 400,
            MaxLocatedCriticalPoints = limit,
        };
        return new PathTracer(model, controls).Trace().ToList();
    }

    [Fact]
    public void After_the_limit_a_step_with_a_count_change_is_one_unresolved_entry_and_the_path_is_unchanged()
    {
        var all = TwoBar(null);
        var limited = TwoBar(1);
        // The limit changes no path point: the location work leaves the walk as it was (bit for bit).
        var p0 = all.OfType<PathPoint>().ToList();
        var p1 = limited.OfType<PathPoint>().ToList();
        Assert.Equal(p0.Count, p1.Count);
        for (int i = 0; i < p0.Count; i++)
        {
            Assert.Equal(p0[i].LoadFactor, p1[i].LoadFactor);
            Assert.Equal(p0[i].Monitored[0], p1[i].Monitored[0]);
        }
        var c0 = all.OfType<CriticalPoint>().ToList();
        var c1 = limited.OfType<CriticalPoint>().ToList();
        Assert.Equal(2, c0.Count);
        Assert.Equal(2, c1.Count);
        // The first is the same located limit point.
        Assert.Equal(CriticalPointKind.LimitPoint, c1[0].Kind);
        Assert.True(c1[0].Located);
        Assert.Equal(c0[0].LoadFactor, c1[0].LoadFactor);
        // The second is reported over its step without location.
        var u = c1[1];
        Assert.Equal(CriticalPointKind.Unresolved, u.Kind);
        Assert.False(u.Located);
        Assert.Equal((c0[1].PointBefore, c0[1].PointAfter), (u.PointBefore, u.PointAfter));
        Assert.Equal((1, 0), (u.NegativePivotsBefore, u.NegativePivotsAfter));
        Assert.Equal(1, u.Multiplicity);
        Assert.Empty(u.Mode);
        Assert.Empty(u.AdditionalModes);
        Assert.Null(u.State);
        Assert.Null(u.Sensitivity);
        Assert.Equal(0.0, u.LowestEigenvalue);
        Assert.Equal(0.0, u.LoadAlignment);
        Assert.Contains("max_located_critical_points (1)", u.LocationNote);
        // The middle of the step, as the contract says.
        var before = p1.Single(p => p.Index == u.PointBefore);
        var after = p1.Single(p => p.Index == u.PointAfter);
        Assert.Equal(0.5 * (before.LoadFactor + after.LoadFactor), u.LoadFactor);
        Assert.Equal(0.5 * (before.Monitored[0] + after.Monitored[0]), u.Monitored[0]);
        Assert.Equal(0.5 * Math.Abs(after.LoadFactor - before.LoadFactor) / Math.Max(1, Math.Abs(u.LoadFactor)), u.Tolerance);
        InertiaAccounting.AssertAccounted(limited);
        // Only the first point's location was paid for.
        var s0 = Assert.IsType<PathSummary>(all[^1]);
        var s1 = Assert.IsType<PathSummary>(limited[^1]);
        Assert.True(s1.CriticalPointFactorizations < s0.CriticalPointFactorizations, $"{s1.CriticalPointFactorizations} vs {s0.CriticalPointFactorizations}");
        Assert.Equal(s0.Factorizations - s1.Factorizations, s0.CriticalPointFactorizations - s1.CriticalPointFactorizations);
    }

    [Fact]
    public void Zero_is_detection_only_with_no_location_work()
    {
        var events = TwoBar(0);
        var cps = events.OfType<CriticalPoint>().ToList();
        Assert.Equal(2, cps.Count);
        Assert.All(cps, c => Assert.Equal(CriticalPointKind.Unresolved, c.Kind));
        Assert.Equal([(0, 1), (1, 0)], cps.Select(c => (c.NegativePivotsBefore, c.NegativePivotsAfter)));
        var s = Assert.IsType<PathSummary>(events[^1]);
        Assert.Equal(0, s.CriticalPointFactorizations);
        Assert.Equal(0, s.CriticalPointSolves);
        InertiaAccounting.AssertAccounted(events);
    }

    /// <summary>
    /// A crowded step is not shortened once no location follows: twelve posts whose springs differ by 1 % each, crossed in
    /// one long step, are one unresolved entry carrying all twelve crossings, and each closed-form critical load lies
    /// inside its λ bracket (λ is monotone there, so the bracket bounds them).
    /// </summary>
    [Fact]
    public void A_crowded_step_is_not_shortened_when_nothing_is_located()
    {
        const double l = 3.0, ea = 5.0e4, k = 40.0;
        var springs = Enumerable.Range(0, 12).Select(i => k * (1 + 0.01 * i)).ToArray();
        var model = StructuralModel.Create(TestModels.PostRow(l, ea, springs, PRef));
        var events = new PathTracer(model, new SolverControls { InitialLoadIncrement = 14.0, TargetLoadFactor = 15, MaxPoints = 200, MaxLocatedCriticalPoints = 0 }).Trace().ToList();
        Assert.DoesNotContain(events.OfType<StepCut>(), c => c.Reason == CutReason.CrowdedCrossings);
        var cp = Assert.Single(events.OfType<CriticalPoint>());
        Assert.Equal(CriticalPointKind.Unresolved, cp.Kind);
        Assert.Equal(12, cp.Multiplicity);
        // P_cr = kL0·√(1 − 2kL0/EA) (our derivation, docs/theory.md; spring-held post).
        foreach (double spring in springs)
        {
            double exact = spring * l * Math.Sqrt(1 - 2 * spring * l / ea) / PRef;
            Assert.InRange(exact, cp.LoadFactorBefore, cp.LoadFactorAfter);
            Assert.True(Math.Abs(exact - cp.LoadFactor) <= cp.Tolerance * Math.Max(1, Math.Abs(cp.LoadFactor)), $"{exact} vs {cp.LoadFactor} ± {cp.Tolerance}");
        }
        InertiaAccounting.AssertAccounted(events);
    }
}
