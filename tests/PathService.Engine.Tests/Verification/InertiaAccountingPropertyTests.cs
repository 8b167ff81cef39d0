using PathService.Bench.Models;
using PathService.Engine.Continuation;
using PathService.Engine.Model;
using PathService.Engine.Tests.Fixtures;

namespace PathService.Engine.Tests.Verification;

/// <summary>
/// Property over many generated models (roofs, domes, arches of two-bar trusses beside posts; varying sizes,
/// supports, step sizes, iteration limits, modified Newton with three iterations, load and arc-length control, branch
/// switching): on every branch, every change of the negative-pivot count between consecutive points is accounted for
/// by reported critical points (see <see cref="InertiaAccounting"/>), a limit point changes it by exactly one, every
/// critical point is located or says why not, and no trace throws.
/// </summary>
public class InertiaAccountingPropertyTests
{
    public sealed record Case(string Name, Func<ModelDefinition> Model, SolverControls Controls)
    {
        public override string ToString() => Name;
    }

    private const int CaseCount = 48;

    public static TheoryData<int> Seeds()
    {
        var data = new TheoryData<int>();
        for (int i = 0; i < CaseCount; i++) data.Add(i);
        return data;
    }

    /// <summary>Case i of the property, from a fixed-seed generator (the same cases on every run).</summary>
    public static Case Generate(int i)
    {
        var rng = new Random(7919 * (i + 1));
        double Pick(params double[] v) => v[rng.Next(v.Length)];
        var controls = new SolverControls
        {
            InitialLoadIncrement = Pick(0.05, 0.2, 0.5, 1.0),
            MaxPoints = 45,
            MaxIterations = 25,
        };
        if (i % 4 == 1) controls = controls with { ModifiedNewton = true, MaxIterations = 3 };
        if (i % 6 == 5) controls = controls with { DesiredIterations = 2, MaxIncrementRatio = 30 };
        switch (i % 3)
        {
            case 0:
            {
                int m = 4 + rng.Next(4);
                var p = new RoofParameters { M = m, RiseRatio = Pick(0.03, 0.04, 0.06), DepthRatio = Pick(0.05, 0.08), DiagonalArea = Pick(1e-3, 5e-4) };
                double inc = Pick(0.5, 2, 5) * m;
                return new($"roof m={m} rise {p.RiseRatio} inc {inc} mn {controls.ModifiedNewton}", () => SpaceTrussRoof.Create(p), controls with { InitialLoadIncrement = inc });
            }
            case 1:
            {
                int rings = 2 + rng.Next(3), perRing = 6 + 2 * rng.Next(4);
                double rise = Pick(1.0, 1.5, 2.0), side = Pick(0.0, 0.05, 0.2);
                int loaded = rng.Next(2) == 0 ? int.MaxValue : 0;
                var c = controls with { InitialLoadIncrement = controls.InitialLoadIncrement * Pick(1, 5) };
                if (rng.Next(5) == 0) c = c with { SwitchBranches = true, SecondaryBranchPoints = 8 };
                return new($"dome {rings}x{perRing} rise {rise} side {side} loaded {loaded} inc {c.InitialLoadIncrement}", () => LatticeDome.Create(rings, perRing, rise: rise, sideLoad: side, loadedRings: loaded), c);
            }
            default:
            {
                double h = Pick(0.25, 0.35, 0.5), share = Pick(0.9, 0.97, 1.05);
                const double b = 4.0, ea = 2.4e5, pRef = 10.0, l = 3.0, eaPost = 5.0e4, k = 40.0;
                double l0 = Math.Sqrt(b * b + h * h);
                double lambdaLimit = 2 * ea * h * h * h / (3 * Math.Sqrt(3) * l0 * l0 * l0) / pRef;
                double pCr = k * l * Math.Sqrt(1 - 2 * k * l / eaPost);
                var c = controls with { InitialLoadIncrement = lambdaLimit * Pick(0.1, 0.3, 0.6) };
                if (i % 5 == 2) c = c with { Method = ContinuationMethod.LoadControl, TargetLoadFactor = 0.99 * lambdaLimit };
                return new($"arch h={h} post at {share} inc {c.InitialLoadIncrement:G3} {c.Method}", () => TestModels.TrussBesidePost(b, h, ea, pRef, l, eaPost, k, pCr / (share * lambdaLimit)), c);
            }
        }
    }

    [Theory]
    [MemberData(nameof(Seeds))]
    public void Every_change_of_the_negative_pivot_count_is_accounted_for_by_reported_critical_points(int seed)
    {
        var c = Generate(seed);
        var events = new PathTracer(StructuralModel.Create(c.Model()), c.Controls).Trace().ToList();
        Assert.IsType<PathSummary>(events[^1]);
        var problem = InertiaAccounting.Check(events);
        Assert.True(problem is null, $"{c.Name}: {problem}");
        foreach (var cp in events.OfType<CriticalPoint>())
            Assert.True(cp.Located || cp.LocationNote.Length > 0, $"{c.Name}: critical point #{cp.Sequence} neither located nor explained");
    }

    [Fact]
    public void The_generated_cases_exercise_what_the_property_is_about()
    {
        // The property is only worth something if the cases reach critical points, multiple crossings in one step,
        // multiple bifurcations and modified Newton: count them over all cases.
        int withCritical = 0, multiStep = 0, multiple = 0, modifiedWithCritical = 0;
        for (int seed = 0; seed < CaseCount; seed++)
        {
            var c = Generate(seed);
            var cps = new PathTracer(StructuralModel.Create(c.Model()), c.Controls).Trace().OfType<CriticalPoint>().ToList();
            if (cps.Count > 0) withCritical++;
            if (cps.GroupBy(x => (x.Branch, x.PointBefore)).Any(g => g.Count() > 1)) multiStep++;
            if (cps.Any(x => x.Multiplicity > 1)) multiple++;
            if (c.Controls.ModifiedNewton && cps.Count > 0) modifiedWithCritical++;
        }
        string counts = $"{withCritical} with critical points, {multiStep} with several in one step, {multiple} with a multiple bifurcation, {modifiedWithCritical} modified Newton with critical points";
        Assert.True(withCritical >= 35, counts);
        Assert.True(multiStep >= 12, counts);
        Assert.True(multiple >= 20, counts);
        Assert.True(modifiedWithCritical >= 4, counts);
    }
}
