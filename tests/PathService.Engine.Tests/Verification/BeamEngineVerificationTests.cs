using PathService.Engine.Continuation;
using PathService.Engine.Model;

namespace PathService.Engine.Tests.Verification;

/// <summary>
/// The corotational beam through the whole engine (model, subdivision, assembly, continuation, critical points), on the
/// cases that <see cref="BeamKernelClosedFormTests"/> checks on the kernel alone: the same published or closed-form
/// values, and agreement with the private dense driver where both solve the same discrete problem. The models lie and
/// are loaded in the x-y plane; their named nodes are held out of it (z and the rotations about x and y), and the
/// sections are four times stiffer out of the plane (I_y = 4 I_z) so that the plane modes come first.
/// </summary>
public class BeamEngineVerificationTests
{
    private const double E = 2.1e8, G = 8.1e7, I = 2.0e-6, L = 3.0;
    private const double A = 1e8 * I / (L * L); // slender: EA L²/EI = 10⁸, as in the kernel's column tests
    // the large-deflection cantilevers use EA L²/EI = 10⁵: with 10⁸ the residual's rounding floor (10⁻¹⁶ EA) lies above
    // the load-control tolerance; the elastica's inextensibility is then met to 10⁻⁵, far inside the tolerances
    private const double ACantilever = 1e5 * I / (L * L);
    // the rolled cantilever carries no axial force at equilibrium, so its result does not depend on EA; a stocky
    // EA L²/EI = 10³ keeps the trace's half-step check from reading the chord shortening of the interpolated mid-state
    // (compression EA·Δφ²/8 for a chord turning by Δφ) as a snap-through
    private const double ARolled = 1e3 * I / (L * L);

    private static IEnumerable<SupportDefinition> Held(string node, params Axis[] axes) => axes.Select(a => new SupportDefinition(node, a));

    /// <summary>z, rotation x and rotation y held at the given nodes.</summary>
    private static IEnumerable<SupportDefinition> InPlane(params string[] nodes) =>
        nodes.SelectMany(n => Held(n, Axis.Z, Axis.RotationX, Axis.RotationY));

    private static BeamDefinition Member(string id, string a, string b, int n, (double, double, double) orientation, double area = A) =>
        new(id, a, b, E, G, area, 4 * I, I, 2 * I, orientation) { Subdivisions = n };

    private static SolverControls LoadControl(double increment, params DofReference[] monitored) => new()
    {
        Method = ContinuationMethod.LoadControl,
        InitialLoadIncrement = increment,
        MaxIncrementRatio = 1,
        TargetLoadFactor = 1.0,
        ResidualTolerance = 1e-10,
        MaxPoints = 400,
        Monitored = monitored,
    };

    /// <summary>
    /// Euler column (L. Euler, 1744; S. P. Timoshenko and J. M. Gere, "Theory of Elastic Stability", 1961, §2.1–2.2)
    /// pinned at both ends in 2, 4, 8 elements: the first bifurcation of the trace lies above π²EI/L² by 21.585 %,
    /// 5.2387 %, 1.2916 % — what the kernel alone gives (BeamKernelClosedFormTests; 12EI/L² for n = 2, theory §15) —
    /// falling 4 times per halving.
    /// </summary>
    [Theory]
    [InlineData(2, 0.21585433760)]
    [InlineData(4, 0.052386973451)]
    [InlineData(8, 0.012916173914)]
    public void Euler_column_bifurcates_where_the_kernel_alone_puts_it(int n, double excess)
    {
        double euler = Math.PI * Math.PI * E * I / (L * L);
        var def = new ModelDefinition
        {
            Name = "pinned column",
            Nodes = [new("foot", 0, 0, 0), new("head", L, 0, 0)],
            Beams = [Member("col", "foot", "head", n, (0, 1, 0))],
            Supports = [.. Held("foot", Axis.X, Axis.Y), .. Held("head", Axis.Y), .. InPlane("foot", "head")],
            Loads = LoadCaseDefinition.ReferenceOnly(new NodalLoad("head", -euler, 0, 0)),
        };
        var cp = ColumnTrace.FirstCriticalPoint(StructuralModel.Create(def));
        Assert.Equal(CriticalPointKind.Bifurcation, cp.Kind);
        Assert.True(cp.Located);
        // measured: 1.2×10⁻⁸, 2.1×10⁻⁹, 2.7×10⁻⁸ (both sides locate a zero eigenvalue of a tangent whose axial entries
        // are 10⁸ times its bending entries)
        Assert.True(Math.Abs(cp.LoadFactor - (1 + excess)) < 3e-7, $"λ_cr = {cp.LoadFactor}, kernel alone {1 + excess}");
    }

    /// <summary>
    /// Cantilever under an end moment 2πEI/L: the tip comes back to the root (elastica of constant curvature; the
    /// discrete polygon closes for any n, theory §15). The chain is built of n one-element beams between named nodes,
    /// all held in the plane: free to leave it, the rolled-up strip is unstable sideways long before the circle closes
    /// (the trace sees the count of negative pivots change), which is physics, not the check wanted here.
    /// </summary>
    [Fact]
    public void End_moment_of_two_pi_EI_over_L_brings_the_tip_back_to_the_root()
    {
        const int n = 10;
        double m = 2 * Math.PI * E * I / L;
        var names = Enumerable.Range(0, n + 1).Select(k => k == 0 ? "root" : k == n ? "tip" : $"n{k}").ToArray();
        var def = new ModelDefinition
        {
            Name = "rolled cantilever",
            Nodes = [.. names.Select((id, k) => new NodeDefinition(id, L * k / n, 0, 0))],
            Beams = [.. Enumerable.Range(1, n).Select(k => Member($"e{k}", names[k - 1], names[k], 1, (0, 1, 0), ARolled))],
            Supports = [.. Held("root", Axis.X, Axis.Y, Axis.RotationZ), .. InPlane(names)],
            Loads = LoadCaseDefinition.ReferenceOnly(new NodalLoad("tip", 0, 0, 0) { Mz = m }),
        };
        var controls = LoadControl(0.05, new DofReference("tip", Axis.X), new DofReference("tip", Axis.Y), new DofReference("tip", Axis.RotationZ));
        var events = new PathTracer(StructuralModel.Create(def), controls).Trace().ToList();
        var last = events.OfType<PathPoint>().Last();
        Assert.True(Math.Abs(last.LoadFactor - 1) < 1e-12, $"stopped at λ = {last.LoadFactor}: {events[^1]}");
        // measured: tip (4.4×10⁻¹⁶, 2.2×10⁻¹⁶) m from the root, rotation 1.0×10⁻¹⁵ (rounding)
        Assert.True(Math.Abs(last.Monitored[0] + L) < 1e-14 * L && Math.Abs(last.Monitored[1]) < 1e-14 * L,
            $"tip displaced by ({last.Monitored[0] + L}, {last.Monitored[1]}, {last.Monitored[2]}), expected (−L, 0)");
        Assert.True(Math.Abs(last.Monitored[2]) < 1e-14, $"tip rotation {last.Monitored[2]} (a full turn is stored as 0)");
    }

    /// <summary>
    /// Cantilever under a transverse tip load PL²/EI = 5 in 20 elements against the elastica (K. Mattiasson, IJNME 17,
    /// 1981, table 1, from memory): tip shortening 0.38763 L, deflection 0.71379 L, rotation 1.21537.
    /// </summary>
    [Fact]
    public void Tip_loaded_cantilever_follows_the_elastica()
    {
        const int n = 20;
        double p = 5 * E * I / (L * L);
        var def = new ModelDefinition
        {
            Name = "tip-loaded cantilever",
            Nodes = [new("root", 0, 0, 0), new("tip", L, 0, 0)],
            Beams = [Member("c", "root", "tip", n, (0, 1, 0), ACantilever)],
            Supports = [.. Held("root", Axis.X, Axis.Y, Axis.RotationZ), .. InPlane("root", "tip")],
            Loads = LoadCaseDefinition.ReferenceOnly(new NodalLoad("tip", 0, p, 0)),
        };
        var controls = LoadControl(0.1, new DofReference("tip", Axis.X), new DofReference("tip", Axis.Y), new DofReference("tip", Axis.RotationZ));
        var events = new PathTracer(StructuralModel.Create(def), controls).Trace().ToList();
        var last = events.OfType<PathPoint>().Last();
        Assert.True(Math.Abs(last.LoadFactor - 1) < 1e-12, $"stopped at λ = {last.LoadFactor}: {events[^1]}");
        // measured: 4.4×10⁻⁵, 2.4×10⁻⁴, 3.1×10⁻⁴, as the kernel alone (the 20-element discretisation)
        Assert.True(Math.Abs(-last.Monitored[0] / L - 0.38763) < 3e-3, $"shortening {-last.Monitored[0] / L}");
        Assert.True(Math.Abs(last.Monitored[1] / L - 0.71379) < 3e-3, $"deflection {last.Monitored[1] / L}");
        Assert.True(Math.Abs(last.Monitored[2] - 1.21537) < 3e-3, $"rotation {last.Monitored[2]}");
    }

    /// <summary>
    /// The two-bar truss of <see cref="TwoBarTrussTests"/> with its bars replaced by beams released in every rotation at
    /// both ends: the same path through both limit points and the same critical points (closed form
    /// P_lim = 2EAh³/(3√3L₀³), theory §6.1).
    /// </summary>
    [Fact]
    public void Truss_of_fully_released_beams_traces_the_bar_truss_path()
    {
        const double b = 4.0, h = 0.35, ea = 2.4e5, pRef = 10.0;
        var bars = TestModels.TwoBarTruss(b, h, ea, pRef);
        var beams = Beams.BeamModels.WithBarsAsPinnedBeams(bars);
        var controls = Beams.BeamModels.ThroughBothLimitPoints(h);
        var withBars = new PathTracer(StructuralModel.Create(bars), controls).Trace().ToList();
        var withBeams = new PathTracer(StructuralModel.Create(beams), controls).Trace().ToList();
        var pb = withBars.OfType<PathPoint>().ToList();
        var pm = withBeams.OfType<PathPoint>().ToList();
        Assert.Equal(pb.Count, pm.Count);
        double worst = 0;
        for (int i = 0; i < pb.Count; i++)
            worst = Math.Max(worst, Math.Max(Math.Abs(pb[i].LoadFactor - pm[i].LoadFactor), Math.Abs(pb[i].Monitored[0] - pm[i].Monitored[0]) / h));
        // measured 5.3×10⁻¹⁴ (the two kinds sum the same numbers in different orders)
        Assert.True(worst < 5e-13, $"paths differ by {worst:E2}");
        var cb = withBars.OfType<CriticalPoint>().Select(c => c.LoadFactor).ToArray();
        var cm = withBeams.OfType<CriticalPoint>().Select(c => c.LoadFactor).ToArray();
        Assert.Equal(cb.Length, cm.Length);
        for (int i = 0; i < cb.Length; i++) Assert.True(Math.Abs(cb[i] - cm[i]) < 1e-12 * Math.Abs(cb[i]), $"critical point {i}: {cb[i]} vs {cm[i]}");
    }

    /// <summary>
    /// Lee's right-angled frame (S. L. Lee, F. S. Manuel and E. C. Rossow, J. Eng. Mech. Div. ASCE 94, 1968, from
    /// memory): the first limit point of the arc-length trace at P L²/EI = 18.659 with 10 elements per member, what the
    /// kernel alone gives by displacement control (published 18.5, three digits, from memory).
    /// </summary>
    [Fact]
    public void Right_angled_frame_passes_its_limit_point_where_the_kernel_alone_puts_it()
    {
        const double span = 120, e = 720, area = 6, i = 2;
        double pRef = e * i / (span * span);
        BeamDefinition Part(string id, string a, string b, int n, (double, double, double) v) =>
            new(id, a, b, e, e / 2.6, area, 4 * i, i, 2 * i, v) { Subdivisions = n };
        var def = new ModelDefinition
        {
            Name = "right-angled frame",
            Nodes = [new("foot", 0, 0, 0), new("knee", 0, span, 0), new("load", 24, span, 0), new("end", span, span, 0)],
            Beams = [Part("column", "foot", "knee", 10, (-1, 0, 0)), Part("beam-1", "knee", "load", 2, (0, 1, 0)), Part("beam-2", "load", "end", 8, (0, 1, 0))],
            Supports =
            [
                .. Held("foot", Axis.X, Axis.Y), .. Held("end", Axis.X, Axis.Y),
                .. InPlane("foot", "knee", "load", "end"),
            ],
            Loads = LoadCaseDefinition.ReferenceOnly(new NodalLoad("load", 0, -pRef, 0)),
        };
        var controls = new SolverControls
        {
            Method = ContinuationMethod.ArcLength,
            InitialLoadIncrement = 2,
            ResidualTolerance = 1e-10,
            DetectCriticalPoints = true,
            StopAtFirstCriticalPoint = true,
            CriticalPointTolerance = 1e-10,
            MaxPoints = 400,
            Monitored = [new DofReference("load", Axis.Y)],
        };
        var cp = new PathTracer(StructuralModel.Create(def), controls).Trace().OfType<CriticalPoint>().First();
        Assert.Equal(CriticalPointKind.LimitPoint, cp.Kind);
        // measured 18.658772 against the driver's 18.65877 (printed to five decimals)
        Assert.True(Math.Abs(cp.LoadFactor - 18.65877) < 5e-5, $"P_max L²/EI = {cp.LoadFactor}");
    }
}
