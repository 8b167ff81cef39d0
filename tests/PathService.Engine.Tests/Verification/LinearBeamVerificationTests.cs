using PathService.Engine.Analyses;
using PathService.Engine.Continuation;
using PathService.Engine.Model;
using Xunit.Abstractions;

namespace PathService.Engine.Tests.Verification;

/// <summary>
/// Linear static analysis and linearised buckling of models with beams against closed forms, a slope-deflection hand
/// result, and the trace's located bifurcation of the same subdivided column. The models lie and are loaded in the x-y
/// plane; their named nodes are held out of it (z and the rotations about x and y), with I_y = 4 I_z so that the plane
/// modes come first (as in <see cref="BeamEngineVerificationTests"/>).
/// </summary>
public class LinearBeamVerificationTests(ITestOutputHelper output)
{
    private const double E = 2.1e8, G = 8.1e7, I = 2.0e-6, L = 3.0;
    private const double A = 1e8 * I / (L * L); // EA L²/EI = 10⁸: axial shortening negligible against bending

    private static IEnumerable<SupportDefinition> Held(string node, params Axis[] axes) => axes.Select(a => new SupportDefinition(node, a));
    private static IEnumerable<SupportDefinition> InPlane(params string[] nodes) => nodes.SelectMany(n => Held(n, Axis.Z, Axis.RotationX, Axis.RotationY));
    private static BeamDefinition Member(string id, string a, string b, int n, (double, double, double) orientation) =>
        new(id, a, b, E, G, A, 4 * I, I, 2 * I, orientation) { Subdivisions = n };

    private static StructuralModel Cantilever(int n, NodalLoad tipLoad) => StructuralModel.Create(new ModelDefinition
    {
        Name = "cantilever",
        Nodes = [new("root", 0, 0, 0), new("tip", L, 0, 0)],
        Beams = [Member("c", "root", "tip", n, (0, 1, 0))],
        Supports = [.. Held("root", Axis.X, Axis.Y, Axis.RotationZ), .. InPlane("root", "tip")],
        Loads = LoadCaseDefinition.ReferenceOnly(tipLoad),
    });

    private static double At(StructuralModel m, double[] v, string node, Axis axis) => v[m.Dofs.Full(m.NodeIndex(node), axis)];

    /// <summary>
    /// Cantilever under a tip force P: δ = PL³/3EI, θ = PL²/2EI, root moment PL; under a tip moment M: θ = ML/EI,
    /// δ = ML²/2EI (Euler-Bernoulli closed forms; S. P. Timoshenko and J. M. Gere, "Mechanics of Materials", 1972).
    /// Cubic elements are exact at the nodes for end loads, so any n reproduces them.
    /// </summary>
    [Theory]
    [InlineData(1)]
    [InlineData(4)]
    public void Cantilever_under_a_tip_force_and_a_tip_moment_matches_the_closed_forms(int n)
    {
        const double P = 10.0, M = 7.0;
        var force = Cantilever(n, new NodalLoad("tip", 0, P, 0));
        var r = LinearStaticAnalysis.Run(force);
        double dy = At(force, r.Displacements, "tip", Axis.Y), rz = At(force, r.Displacements, "tip", Axis.RotationZ);
        double rootMoment = At(force, r.Reactions, "root", Axis.RotationZ);
        double e1 = Math.Abs(dy / (P * L * L * L / (3 * E * I)) - 1), e2 = Math.Abs(rz / (P * L * L / (2 * E * I)) - 1);
        double e3 = Math.Abs(rootMoment / (-P * L) - 1);
        // the root element's end actions: shear P and moment PL at the start (local y along global y)
        var first = r.BeamEndForces.AsSpan(0, 12);
        double e4 = Math.Abs(Math.Abs(first[5]) / (P * L) - 1), e5 = Math.Abs(Math.Abs(first[1]) / P - 1);

        var moment = Cantilever(n, new NodalLoad("tip", 0, 0, 0) { Mz = M });
        var q = LinearStaticAnalysis.Run(moment);
        double e6 = Math.Abs(At(moment, q.Displacements, "tip", Axis.RotationZ) / (M * L / (E * I)) - 1);
        double e7 = Math.Abs(At(moment, q.Displacements, "tip", Axis.Y) / (M * L * L / (2 * E * I)) - 1);
        double e8 = Math.Abs(At(moment, q.Reactions, "root", Axis.RotationZ) / -M - 1);
        output.WriteLine($"n={n}: {e1:E2} {e2:E2} {e3:E2} {e4:E2} {e5:E2} {e6:E2} {e7:E2} {e8:E2}");
        // measured: ≤ 2×10⁻¹⁵ for the nodal values, ≤ 8×10⁻¹¹ for the end actions (central difference of the kernel's actions)
        foreach (var e in new[] { e1, e2, e3, e6, e7, e8 }) Assert.True(e < 1e-9, $"relative error {e}");
        foreach (var e in new[] { e4, e5 }) Assert.True(e < 1e-9, $"end action relative error {e}");
    }

    /// <summary>
    /// Portal frame, feet fixed, columns of height h and stiffness c = EI_c/h, beam of span b and g = EI_b/b, a
    /// horizontal force H at one top corner; inextensible members (EA huge). Slope-deflection (G. A. Maney, 1915; the
    /// method as in any text on indeterminate structures, from memory): by antisymmetry both joints turn by θ and the
    /// beam ends carry M = 6gθ; a column's top moment is 2c(2θ − 3Δ/h), its foot 2c(θ − 3Δ/h).
    /// Joint: 2c(2θ − 3Δ/h) + 6gθ = 0 ⇒ θ = 3cΔ/(h(2c + 3g)).
    /// Storey shear: H = 2·(M_top + M_foot)/h magnitude = (12c/h)(2Δ/h − θ) ⇒ Δ = H h² (2c + 3g) / (12c(c + 6g)).
    /// Limits: g → ∞ gives Hh³/(24EI_c) (two fixed-fixed posts), g → 0 gives Hh³/(6EI_c) (two cantilevers).
    /// Foot moment magnitude |2c(θ − 3Δ/h)|.
    /// </summary>
    [Fact]
    public void Portal_frame_sways_as_slope_deflection_gives()
    {
        const double h = 3.0, b = 5.0, H = 12.0;
        var def = new ModelDefinition
        {
            Name = "portal",
            Nodes = [new("a", 0, 0, 0), new("b", 0, h, 0), new("c", b, h, 0), new("d", b, 0, 0)],
            Beams = [Member("left", "a", "b", 1, (-1, 0, 0)), Member("top", "b", "c", 1, (0, 1, 0)), Member("right", "d", "c", 1, (-1, 0, 0))],
            Supports = [.. Held("a", Axis.X, Axis.Y, Axis.RotationZ), .. Held("d", Axis.X, Axis.Y, Axis.RotationZ), .. InPlane("a", "b", "c", "d")],
            Loads = LoadCaseDefinition.ReferenceOnly(new NodalLoad("b", H, 0, 0)),
        };
        var m = StructuralModel.Create(def);
        var r = LinearStaticAnalysis.Run(m);
        double c = E * I / h, g = E * I / b;
        double sway = H * h * h * (2 * c + 3 * g) / (12 * c * (c + 6 * g));
        double theta = 3 * c * sway / (h * (2 * c + 3 * g));
        double foot = Math.Abs(2 * c * (theta - 3 * sway / h));
        double eSway = Math.Abs(At(m, r.Displacements, "b", Axis.X) / sway - 1);
        double eSway2 = Math.Abs(At(m, r.Displacements, "c", Axis.X) / sway - 1);
        double eTheta = Math.Abs(Math.Abs(At(m, r.Displacements, "b", Axis.RotationZ)) / theta - 1);
        double eFoot = Math.Abs(Math.Abs(At(m, r.Reactions, "a", Axis.RotationZ)) / foot - 1);
        double eShear = Math.Abs((At(m, r.Reactions, "a", Axis.X) + At(m, r.Reactions, "d", Axis.X)) / -H - 1);
        output.WriteLine($"sway {eSway:E2} {eSway2:E2} θ {eTheta:E2} foot {eFoot:E2} shear {eShear:E2}");
        // measured at EA h²/EI ≈ 10⁸: the members' axial strain is what separates the frame from the inextensible hand result
        // measured: 7.7e-8, 4.4e-8, 1.3e-7, 5.8e-8; storey shear 4.8e-10 (reactions from K entries 10⁸ times the bending ones)
        foreach (var e in new[] { eSway, eSway2, eTheta, eFoot }) Assert.True(e < 1e-6, $"relative error {e}");
        Assert.True(eShear < 5e-9, $"storey shear {eShear}");
    }

    private static StructuralModel Column(int n, bool fixedFree, double load)
    {
        var supports = fixedFree
            ? Held("foot", Axis.X, Axis.Y, Axis.RotationZ).Concat(InPlane("foot", "head"))
            : Held("foot", Axis.X, Axis.Y).Concat(Held("head", Axis.Y)).Concat(InPlane("foot", "head"));
        return StructuralModel.Create(new ModelDefinition
        {
            Name = fixedFree ? "fixed-free column" : "pinned column",
            Nodes = [new("foot", 0, 0, 0), new("head", L, 0, 0)],
            Beams = [Member("col", "foot", "head", n, (0, 1, 0))],
            Supports = [.. supports],
            Loads = LoadCaseDefinition.ReferenceOnly(new NodalLoad("head", -load, 0, 0)),
        });
    }

    /// <summary>
    /// Euler column (L. Euler, 1744; S. P. Timoshenko and J. M. Gere, "Theory of Elastic Stability", 1961, §2.1–2.2),
    /// pinned–pinned (K = 1) and fixed–free (K = 2), loaded by π²EI/(KL)², in n = 4, 8, 16 beam elements: the linearised
    /// λ_cr tends to 1 from above with the error falling about 4 times per halving (chord geometric stiffness only).
    /// </summary>
    [Theory]
    [InlineData(false)]
    [InlineData(true)]
    public void Subdivided_Euler_column_converges_to_the_closed_form(bool fixedFree)
    {
        double k = fixedFree ? 2 : 1;
        double euler = Math.PI * Math.PI * E * I / (k * L * k * L);
        var errors = new List<double>();
        foreach (int n in new[] { 4, 8, 16 })
        {
            var result = LinearBucklingAnalysis.Run(Column(n, fixedFree, euler), modeCount: 1);
            Assert.True(result.Converged);
            errors.Add(result.Modes[0].LoadFactor - 1);
        }
        output.WriteLine($"errors {string.Join(", ", errors.Select(e => e.ToString("E4")))}; ratios {errors[0] / errors[1]:F3}, {errors[1] / errors[2]:F3}");
        Assert.All(errors, e => Assert.True(e > 0, $"λ_cr − 1 = {e}: a displacement element buckles above the exact load"));
        Assert.True(errors[2] < (fixedFree ? 2e-3 : 5e-3), $"n = 16: {errors[2]}");
        for (int i = 0; i < 2; i++)
        {
            double ratio = errors[i] / errors[i + 1];
            Assert.True(ratio > 3.8 && ratio < 4.2, $"error ratio {ratio} per halving");
        }
    }

    /// <summary>
    /// The linearised buckling load of a subdivided column equals the first bifurcation the trace locates on its path: the
    /// column's pre-buckling state is a uniform compression, so both solve the same eigenproblem up to the O(N/EA) change
    /// of geometry before buckling (10⁻⁸ here) and the location tolerance.
    /// </summary>
    [Theory]
    [InlineData(4, false)]
    [InlineData(8, false)]
    [InlineData(4, true)]
    public void Linear_buckling_load_equals_the_traced_bifurcation(int n, bool fixedFree)
    {
        double k = fixedFree ? 2 : 1;
        double euler = Math.PI * Math.PI * E * I / (k * L * k * L);
        var model = Column(n, fixedFree, euler);
        double linear = LinearBucklingAnalysis.Run(model, modeCount: 1).Modes[0].LoadFactor;
        var cp = ColumnTrace.FirstCriticalPoint(model);
        Assert.Equal(CriticalPointKind.Bifurcation, cp.Kind);
        double diff = Math.Abs(linear - cp.LoadFactor);
        output.WriteLine($"n={n} fixedFree={fixedFree}: linear {linear:R}, traced {cp.LoadFactor:R}, difference {diff:E2}");
        // measured: 1.1×10⁻⁷ (n = 4, 8 pinned), 2.5×10⁻⁸ (n = 4 fixed-free); the trace itself lies within 3×10⁻⁹ of the
        // kernel-alone loads, so the difference is the linear side's (the tangent's change along u beyond the chord N/l)
        Assert.True(diff < 1e-6, $"linear {linear}, traced {cp.LoadFactor}");
    }

    /// <summary>
    /// The two-bar truss built of beams released in every rotation at both ends is the bar truss: the linear static
    /// solution agrees to round-off. The linearised buckling load differs, and by a factor we derive: the beams' K_σ is the
    /// change of their whole tangent, which also carries the turn of the axial stiffness with the chord (the
    /// initial-displacement term). For a bar of chord d = L e + Δu the material block (EA/L³) d dᵀ changes by
    /// (EA/L³)(Δu dᵀ + d Δuᵀ) per unit of Δu; in the apex's vertical direction (e_y = sin α) that is 2(EA/L²) sin α Δu_y =
    /// 2N/L, twice the bar's explicit N/L. The symmetric (vertical) mode thus sees three times the geometric stiffness:
    /// λ_beams = λ_bars / 3 (theory §15.1).
    /// </summary>
    [Fact]
    public void Released_beam_truss_gives_the_bar_truss_linear_results()
    {
        const double b = 4.0, h = 0.35, ea = 2.4e5, pRef = 10.0;
        var bars = TestModels.TwoBarTruss(b, h, ea, pRef);
        var beams = Beams.BeamModels.WithBarsAsPinnedBeams(bars);
        var mb = StructuralModel.Create(bars);
        var mm = StructuralModel.Create(beams);
        var sb = LinearStaticAnalysis.Run(mb);
        var sm = LinearStaticAnalysis.Run(mm);
        double scale = sb.Displacements.Max(Math.Abs), worst = 0;
        for (int n = 0; n < mb.NodeCount; n++)
            for (int c = 0; c < 3; c++)
                worst = Math.Max(worst, Math.Abs(sb.Displacements[3 * n + c] - sm.Displacements[mm.Dofs.Offset[n] + c]) / scale);
        // the beams' axial end action (F2x = N, tension positive) against the bar force
        double nWorst = 0;
        for (int e = 0; e < 2; e++) nWorst = Math.Max(nWorst, Math.Abs(sm.BeamEndForces[12 * e + 6] - sb.BarForces[e]) / Math.Abs(sb.BarForces[e]));
        double lb = LinearBucklingAnalysis.Run(mb, modeCount: 1).Modes[0].LoadFactor;
        double lm = LinearBucklingAnalysis.Run(mm, modeCount: 1).Modes[0].LoadFactor;
        double strain = Math.Abs(sb.BarForces[0]) * lb / ea;
        output.WriteLine($"displacements {worst:E2}, axial force {nWorst:E2}, λ bars {lb:R}, beams {lm:R}, 3λm/λb − 1 {3 * lm / lb - 1:E2}, strain at λ {strain:E2}");
        Assert.True(worst < 1e-14, $"displacements differ by {worst}");
        Assert.True(nWorst < 5e-9, $"axial force differs by {nWorst}");
        // measured: displacements 1.6e-16, axial force 4.0e-10 (central difference of the end actions), 3λ_beams/λ_bars − 1 = −3.4e-13
        Assert.True(Math.Abs(3 * lm / lb - 1) < 5e-12, $"λ bars {lb}, beams {lm}");
    }

    /// <summary>
    /// Bars keep their explicit K_σ when beams are present: the two-bar truss beside an unloaded cantilever (a separate
    /// part, so the truss's problem is unchanged) has the bars-only λ_cr, although the model now takes the beam path.
    /// </summary>
    [Fact]
    public void Bars_keep_their_classical_geometric_stiffness_beside_beams()
    {
        var bars = TestModels.TwoBarTruss(4.0, 0.35, 2.4e5, 10.0);
        var mixed = bars with
        {
            Nodes = [.. bars.Nodes, new("post-foot", 20, 0, 0), new("post-top", 20, 3, 0)],
            Beams = [Member("post", "post-foot", "post-top", 2, (1, 0, 0))],
            Supports = [.. bars.Supports, .. Held("post-foot", Axis.X, Axis.Y, Axis.Z, Axis.RotationX, Axis.RotationY, Axis.RotationZ)],
        };
        double lb = LinearBucklingAnalysis.Run(StructuralModel.Create(bars), modeCount: 1).Modes[0].LoadFactor;
        double lm = LinearBucklingAnalysis.Run(StructuralModel.Create(mixed), modeCount: 1).Modes[0].LoadFactor;
        output.WriteLine($"bars {lb:R}, mixed {lm:R}, relative {lm / lb - 1:E2}");
        // measured: 0 (the bars' difference is removed with the very blocks the assembler added); round-off allowance
        Assert.True(Math.Abs(lm / lb - 1) < 1e-12, $"bars {lb}, mixed {lm}");
    }
}
