using PathService.Engine.Analyses;
using PathService.Engine.Continuation;
using PathService.Engine.Elements;
using PathService.Engine.Model;

namespace PathService.Engine.Tests.Verification;

/// <summary>
/// A square braced panel with one-sided diagonals and no prestress, against statics worked by hand.
///
/// Panel in the x-z plane, side a: base nodes "base-w" (0, 0, 0) and "base-e" (a, 0, 0) pinned; top nodes "top-w"
/// (0, 0, a) and "top-e" (a, 0, a) held out of plane (y). Bars: posts base-w–top-w and base-e–top-e, beam
/// top-w–top-e, diagonals "diag-up" base-w–top-e and "diag-down" base-e–top-w. Load H along +x at top-w.
///
/// Tension-only diagonals, H &gt; 0: the panel sways to +x, diag-up lengthens and diag-down shortens, so diag-down is
/// slack and the rest is statically determinate (4 bars for the 4 free displacements). Joint top-w, x: H + N_beam = 0,
/// so N_beam = −H; z: N_post-w = 0. Joint top-e, x: H − N_up/√2 = 0, so N_up = H√2; z: −N_post-e − N_up/√2 = 0, so
/// N_post-e = −H. Reversing H makes diag-down the working one, N_down = H√2, with N_post-w = −H and the beam and
/// post-e unloaded. Compression-only diagonals, H &gt; 0: diag-up (lengthening) disengages; joint top-e gives
/// N_beam = N_post-e = 0, joint top-w, x: H + N_down/√2 = 0, so N_down = −H√2, and z: −N_post-w − N_down/√2 = 0, so
/// N_post-w = H. (Method of joints, e.g. S. Timoshenko and D. H. Young, "Engineering Mechanics", 1940, ch. 4, from memory.)
/// </summary>
public class OneSidedBracingTests
{
    private const double Side = 4.0, E = 2.1e8, Area = 1.0e-3, H = 1.0; // m, kN/m², m², kN: EA/H = 2.1e5

    private static StructuralModel Panel(BarBehavior diagonals, double load) => StructuralModel.Create(new ModelDefinition
    {
        Nodes = [new("base-w", 0, 0, 0), new("base-e", Side, 0, 0), new("top-e", Side, 0, Side), new("top-w", 0, 0, Side)],
        Bars =
        [
            new("post-w", "base-w", "top-w", E, Area),
            new("post-e", "base-e", "top-e", E, Area),
            new("beam", "top-w", "top-e", E, Area),
            new("diag-up", "base-w", "top-e", E, Area) { Behavior = diagonals },
            new("diag-down", "base-e", "top-w", E, Area) { Behavior = diagonals },
        ],
        Supports = [.. TestModels.Pin("base-w"), .. TestModels.Pin("base-e"), new("top-w", Axis.Y), new("top-e", Axis.Y)],
        Loads = LoadCaseDefinition.ReferenceOnly(new NodalLoad("top-w", load, 0, 0)),
    });

    /// <summary>Hand statics above: bar forces in the order post-w, post-e, beam, diag-up, diag-down.</summary>
    private static double[] Expected(BarBehavior diagonals, double sign)
    {
        double r2 = Math.Sqrt(2) * H;
        if (diagonals == BarBehavior.TensionOnly)
            return sign > 0 ? [0, -H, -H, r2, 0] : [-H, 0, 0, 0, r2];
        return sign > 0 ? [H, 0, 0, 0, -r2] : [0, H, H, -r2, 0];
    }

    private static string SlackDiagonal(BarBehavior diagonals, double sign) =>
        (diagonals == BarBehavior.TensionOnly) == (sign > 0) ? "diag-down" : "diag-up";

    [Theory]
    [InlineData(BarBehavior.TensionOnly, 1.0)]
    [InlineData(BarBehavior.TensionOnly, -1.0)]
    [InlineData(BarBehavior.CompressionOnly, 1.0)]
    [InlineData(BarBehavior.CompressionOnly, -1.0)]
    public void Linear_analysis_puts_the_load_in_the_working_diagonal_and_leaves_the_other_slack(BarBehavior diagonals, double sign)
    {
        var r = LinearStaticAnalysis.Run(Panel(diagonals, sign * H));
        var expected = Expected(diagonals, sign);
        // The linear solution of a determinate truss is exact up to round-off (measured 2.4e-15 H).
        for (int b = 0; b < expected.Length; b++) Assert.Equal(expected[b], r.BarForces[b], 3e-14);
        Assert.Equal([SlackDiagonal(diagonals, sign)], r.SlackBars);
        // All active first (one diagonal works against the load), then the offending diagonal slack: two solves.
        Assert.Equal(2, r.ActiveSetIterations);
    }

    [Theory]
    [InlineData(BarBehavior.TensionOnly, 1.0)]
    [InlineData(BarBehavior.TensionOnly, -1.0)]
    [InlineData(BarBehavior.CompressionOnly, 1.0)]
    [InlineData(BarBehavior.CompressionOnly, -1.0)]
    public void Nonlinear_trace_agrees_with_the_hand_statics_at_a_small_load(BarBehavior diagonals, double sign)
    {
        var events = new PathTracer(Panel(diagonals, sign * H), new SolverControls
        {
            Method = ContinuationMethod.LoadControl, InitialLoadIncrement = 1.0, TargetLoadFactor = 1.0, ResidualTolerance = 1e-12,
            FullStateEvery = 1, DetectCriticalPoints = false,
        }).Trace().ToList();
        var point = events.OfType<PathPoint>().Single(p => p.Index == 1);
        Assert.Equal(1.0, point.LoadFactor, 1e-12);
        var expected = Expected(diagonals, sign);
        // Differences are the geometric nonlinearity, of order the rotation H/EA ≈ 5e-6 (measured 9.5e-6 H).
        for (int b = 0; b < expected.Length; b++) Assert.Equal(expected[b], point.State!.BarForces[b], 1e-4);
        Assert.Equal(0.0, point.State!.BarForces[SlackDiagonal(diagonals, sign) == "diag-up" ? 3 : 4]);
        Assert.Equal(0, point.NegativePivots);
        var slack = Assert.Single(events.OfType<MemberEvent>(), e => e.Kind == MemberEventKind.Slack);
        Assert.Equal(SlackDiagonal(diagonals, sign), slack.BarId);
    }

    /// <summary>The rule itself: active on the closed side including S = 0, slack only strictly on the open side.</summary>
    [Fact]
    public void One_sided_bar_is_active_at_zero_stress_and_slack_only_beyond_it()
    {
        var atRest = BarMaterial.Respond(BarBehavior.TensionOnly, E, 0, 0, 0.0, 0);
        Assert.Equal((0.0, E, BarRegime.Elastic), (atRest.Stress, atRest.TangentModulus, atRest.Regime));
        var shortened = BarMaterial.Respond(BarBehavior.TensionOnly, E, 0, 0, -1e-12, 0);
        Assert.Equal((0.0, 0.0, BarRegime.Slack), (shortened.Stress, shortened.TangentModulus, shortened.Regime));
        var strut = BarMaterial.Respond(BarBehavior.CompressionOnly, E, 0, 0, 0.0, 0);
        Assert.Equal((E, BarRegime.Elastic), (strut.TangentModulus, strut.Regime));
        Assert.Equal(BarRegime.Slack, BarMaterial.Respond(BarBehavior.CompressionOnly, E, 0, 0, 1e-12, 0).Regime);
        // With prestress the rule is on the stress: a cable pretensioned to S0 stays taut down to ε = −S0/E.
        Assert.Equal(BarRegime.Elastic, BarMaterial.Respond(BarBehavior.TensionOnly, E, 1e3, 0, -0.99e3 / E, 0).Regime);
        Assert.Equal(BarRegime.Slack, BarMaterial.Respond(BarBehavior.TensionOnly, E, 1e3, 0, -1.01e3 / E, 0).Regime);
    }

    /// <summary>
    /// The unbraced-but-for-cables panel is not a mechanism at rest: the trace starts (stable, no negative pivot) and the
    /// linear analysis solves. With both diagonals removed the same panel is refused as a mechanism, which shows that
    /// it is the taut diagonals that make it stable.
    /// </summary>
    [Fact]
    public void Panel_braced_by_cables_without_prestress_is_not_a_mechanism_but_without_them_it_is()
    {
        var start = new PathTracer(Panel(BarBehavior.TensionOnly, H), new SolverControls { MaxPoints = 1 }).Trace().OfType<PathPoint>().First();
        Assert.Equal(0, start.NegativePivots);
        var unbraced = new ModelDefinition
        {
            Nodes = [new("base-w", 0, 0, 0), new("base-e", Side, 0, 0), new("top-e", Side, 0, Side), new("top-w", 0, 0, Side)],
            Bars = [new("post-w", "base-w", "top-w", E, Area), new("post-e", "base-e", "top-e", E, Area), new("beam", "top-w", "top-e", E, Area)],
            Supports = [.. TestModels.Pin("base-w"), .. TestModels.Pin("base-e"), new("top-w", Axis.Y), new("top-e", Axis.Y)],
            Loads = LoadCaseDefinition.ReferenceOnly(new NodalLoad("top-w", H, 0, 0)),
        };
        Assert.Throws<MechanismException>(() => LinearStaticAnalysis.Run(StructuralModel.Create(unbraced)));
    }

    /// <summary>
    /// A slider on x held by a ground spring k_s = 1 and a compression-only strut (EA/L = 100) pretensioned to
    /// T0 = S0·A = 10, so slack at rest, pushed with P = −0.5. In the linear model (initial-stress stiffness g = T0/L = 10
    /// while the strut is active) the slack strut's gap force T0 + (EA/L)P/k_s = −40 says "engage", and the engaged
    /// strut's force (T0(k_s + g) + (EA/L)P)/(k_s + EA/L + g) = 60/111 &gt; 0 says "disengage" (our derivation): no set of
    /// slack bars is consistent, and the analysis says so by name instead of looping.
    /// </summary>
    [Fact]
    public void Linear_analysis_reports_a_strut_that_switches_forever_by_name()
    {
        var def = new ModelDefinition
        {
            Nodes = [new("anchor", -1, 0, 0), new("slider", 0, 0, 0)],
            Bars = [new("strut", "anchor", "slider", 1e4, 1e-2, 1e3) { Behavior = BarBehavior.CompressionOnly }],
            GroundSprings = [new GroundSpringDefinition("guide", "slider", Axis.X, 1.0)],
            Supports = [.. TestModels.Pin("anchor"), new("slider", Axis.Y), new("slider", Axis.Z)],
            Loads = LoadCaseDefinition.ReferenceOnly(new NodalLoad("slider", -0.5, 0, 0)),
        };
        var e = Assert.Throws<ActiveSetCyclingException>(() => LinearStaticAnalysis.Run(StructuralModel.Create(def)));
        Assert.Equal(["strut"], e.BarIds);
        Assert.Contains("'strut'", e.Message);
        Assert.True(e.Iterations <= LinearStaticAnalysis.ActiveSetCap(1));
        // With the push 2.5 times larger the strut engages for good: (110 − 125)/111 < 0 and the gap −115 agree.
        var engaged = LinearStaticAnalysis.Run(StructuralModel.Create(def with { Loads = LoadCaseDefinition.ReferenceOnly(new NodalLoad("slider", -1.25, 0, 0)) }));
        Assert.Empty(engaged.SlackBars);
        Assert.Equal(-15.0 / 111.0, engaged.BarForces[0], 1e-15);
    }

    [Fact]
    public void Linear_analysis_stops_when_cancelled()
    {
        using var cts = new CancellationTokenSource();
        cts.Cancel();
        Assert.ThrowsAny<OperationCanceledException>(() => LinearStaticAnalysis.Run(Panel(BarBehavior.TensionOnly, H), cancellationToken: cts.Token));
    }

    /// <summary>
    /// A two-bay, three-storey frame in the x-z plane, X-braced in every panel with tension-only diagonals without
    /// prestress, under floor gravity loads and wind toward +x: statically indeterminate, so the slack set is not known
    /// by hand. The linear active-set analysis and the nonlinear trace at the same small load (H/EA ≈ 10⁻⁴) must pick the
    /// same slack diagonals and the same forces, up to the geometric nonlinearity of that load (the trace is the
    /// independent reference here: it finds the slack set by Newton's method on the member law, not by active sets).
    /// </summary>
    [Fact]
    public void Linear_active_set_and_trace_agree_on_an_x_braced_frame()
    {
        var nodes = new List<NodeDefinition>();
        var bars = new List<BarDefinition>();
        var supports = new List<SupportDefinition>();
        var loads = new List<NodalLoad>();
        string N(int c, int f) => $"n{c}{f}";
        for (int f = 0; f <= 3; f++)
            for (int c = 0; c <= 2; c++)
            {
                nodes.Add(new(N(c, f), 4.0 * c, 0, 3.0 * f));
                if (f == 0) supports.AddRange(TestModels.Pin(N(c, f)));
                else
                {
                    supports.Add(new(N(c, f), Axis.Y));
                    loads.Add(new NodalLoad(N(c, f), c == 0 ? 8.0 * f : 0, 0, -15.0));
                }
            }
        for (int f = 1; f <= 3; f++)
            for (int c = 0; c <= 2; c++)
            {
                bars.Add(new($"col{c}{f}", N(c, f - 1), N(c, f), E, 4e-3));
                if (c < 2)
                {
                    bars.Add(new($"beam{c}{f}", N(c, f), N(c + 1, f), E, 4e-3));
                    bars.Add(new($"up{c}{f}", N(c, f - 1), N(c + 1, f), E, 5e-4) { Behavior = BarBehavior.TensionOnly });
                    bars.Add(new($"down{c}{f}", N(c + 1, f - 1), N(c, f), E, 5e-4) { Behavior = BarBehavior.TensionOnly });
                }
            }
        var model = StructuralModel.Create(new ModelDefinition
        {
            Nodes = nodes, Bars = bars, Supports = supports, Loads = LoadCaseDefinition.ReferenceOnly([.. loads]),
        });
        var linear = LinearStaticAnalysis.Run(model);
        var trace = new PathTracer(model, new SolverControls
        {
            Method = ContinuationMethod.LoadControl, InitialLoadIncrement = 1.0, TargetLoadFactor = 1.0, ResidualTolerance = 1e-12,
            FullStateEvery = 1, DetectCriticalPoints = false,
        }).Trace().ToList();
        var state = trace.OfType<PathPoint>().Single(p => p.Index == 1).State!;
        var slackInTrace = Enumerable.Range(0, model.BarCount).Where(b => model.BarBehavior[b] == BarBehavior.TensionOnly && state.BarForces[b] == 0)
            .Select(b => model.BarIds[b]).ToArray();
        Assert.NotEmpty(linear.SlackBars);
        Assert.True(linear.SlackBars.Count < 12, "some diagonals must work");
        Assert.Equal(linear.SlackBars, slackInTrace);
        double largest = linear.BarForces.Max(Math.Abs);
        // Measured: the same six slack diagonals (the shortening ones, after two active-set solves); forces within
        // 7.8e-4 of the largest (the trace includes the sway of the gravity loads, which the linear analysis omits).
        for (int b = 0; b < model.BarCount; b++) Assert.Equal(linear.BarForces[b], state.BarForces[b], 8e-3 * largest);
    }
}
