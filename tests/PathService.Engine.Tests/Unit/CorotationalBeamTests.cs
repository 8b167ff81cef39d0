using PathService.Engine.Elements;

namespace PathService.Engine.Tests.Unit;

/// <summary>
/// The corotational beam kernel on its own: rigid-body motions leave it unstressed, superposed rigid motions rotate its
/// forces (objectivity), the tangent is the derivative of the internal force for spin increments (central
/// differences), its skew part is exactly −spin(mᵢ) on the nodal rotation blocks, at rest it is the linear 3D frame
/// element (J. S. Przemieniecki, "Theory of Matrix Structural Analysis", 1968, ch. 5, from memory), released ends
/// included, and under an axial force it adds the string stiffness N/L of the chord.
/// </summary>
public class CorotationalBeamTests
{
    internal sealed record Element(double[] X1, double[] X2, double[] Reference, BeamSection Section);

    internal static Element RandomElement(Random rng, BeamReleases releases = default, BeamSection? section = null)
    {
        var x1 = new[] { rng.NextDouble(), rng.NextDouble(), rng.NextDouble() };
        var x2 = new[] { x1[0] + 1 + rng.NextDouble(), x1[1] + rng.NextDouble() - 0.5, x1[2] + 2 * rng.NextDouble() - 1 };
        var v = new[] { rng.NextDouble() - 0.5, rng.NextDouble() - 0.5, 1.0 };
        var s = section ?? new BeamSection(E: 1.0 + rng.NextDouble(), G: 0.4 + 0.2 * rng.NextDouble(), A: 1.0,
            Iy: 0.05 + 0.1 * rng.NextDouble(), Iz: 0.05 + 0.1 * rng.NextDouble(), J: 0.1 + 0.1 * rng.NextDouble());
        var reference = new double[CorotationalBeam.ReferenceSize];
        Assert.True(CorotationalBeam.TryPrepare(x1, x2, v, s, releases, reference));
        return new Element(x1, x2, reference, s);
    }

    internal static double[] Exp(params double[] theta)
    {
        var r = new double[9];
        Rotations.Exp(theta, r);
        return r;
    }

    private static readonly double[] Identity = [1, 0, 0, 0, 1, 0, 0, 0, 1];

    internal static (double[] F, double[] K, double[] Local) Evaluate(Element e, double[] u1, double[] r1, double[] u2, double[] r2, bool symmetric = true)
    {
        var f = new double[12]; var k = new double[144]; var local = new double[12];
        Assert.True(CorotationalBeam.Evaluate(e.Reference, u1, r1, u2, r2, f, k, local, symmetric));
        return (f, k, local);
    }

    private static double[] RandomVector(Random rng, double scale) =>
        [scale * (rng.NextDouble() - 0.5), scale * (rng.NextDouble() - 0.5), scale * (rng.NextDouble() - 0.5)];

    [Theory]
    [InlineData(1)]
    [InlineData(2)]
    [InlineData(3)]
    public void Rigid_body_motion_with_a_large_rotation_leaves_the_beam_unstressed(int seed)
    {
        var rng = new Random(seed);
        var e = RandomElement(rng);
        var q = Exp(RandomVector(rng, 4.0)); // up to ~2 rad
        var c = RandomVector(rng, 10.0);
        double[] Move(double[] x)
        {
            var y = new double[3];
            for (int i = 0; i < 3; i++) y[i] = q[3 * i] * x[0] + q[3 * i + 1] * x[1] + q[3 * i + 2] * x[2] + c[i] - x[i];
            return y;
        }
        var (f, _, local) = Evaluate(e, Move(e.X1), q, Move(e.X2), q);
        double worst = Math.Max(f.Max(Math.Abs), local.Max(Math.Abs));
        // measured 5.9×10⁻¹⁶
        Assert.True(worst < 6e-15, $"largest internal force {worst} after a rigid motion (forces here are O(1) per unit strain)");
    }

    [Theory]
    [InlineData(4)]
    [InlineData(5)]
    public void A_superposed_rigid_rotation_rotates_the_forces(int seed)
    {
        var rng = new Random(seed);
        var e = RandomElement(rng);
        var u1 = RandomVector(rng, 0.3); var u2 = RandomVector(rng, 0.3);
        var r1 = Exp(RandomVector(rng, 0.8)); var r2 = Exp(RandomVector(rng, 0.8));
        var (f, _, local) = Evaluate(e, u1, r1, u2, r2);
        var q = Exp(RandomVector(rng, 4.0));
        double[] MoveU(double[] x, double[] u)
        {
            var y = new double[3];
            for (int i = 0; i < 3; i++) y[i] = q[3 * i] * (x[0] + u[0]) + q[3 * i + 1] * (x[1] + u[1]) + q[3 * i + 2] * (x[2] + u[2]) - x[i];
            return y;
        }
        var qr1 = new double[9]; var qr2 = new double[9];
        Rotations.Multiply(q, r1, qr1); Rotations.Multiply(q, r2, qr2);
        var (g, _, localMoved) = Evaluate(e, MoveU(e.X1, u1), qr1, MoveU(e.X2, u2), qr2);
        double scale = f.Max(Math.Abs), worst = 0;
        for (int b = 0; b < 4; b++)
            for (int i = 0; i < 3; i++)
            {
                double expected = q[3 * i] * f[3 * b] + q[3 * i + 1] * f[3 * b + 1] + q[3 * i + 2] * f[3 * b + 2];
                worst = Math.Max(worst, Math.Abs(g[3 * b + i] - expected));
            }
        for (int i = 0; i < 12; i++) worst = Math.Max(worst, Math.Abs(local[i] - localMoved[i]));
        // measured ≤ 2.0×10⁻¹⁵
        Assert.True(worst < 2e-14 * scale, $"forces differ from the rotated ones by {worst / scale:E2} of the largest");
    }

    /// <summary>Central differences of the internal force: translations added, rotations updated R ← exp(h eₖ) R.</summary>
    internal static double[] FiniteDifferenceTangent(Element e, double[] u1, double[] r1, double[] u2, double[] r2, double h)
    {
        var fd = new double[144];
        var fp = new double[12]; var fm = new double[12];
        for (int j = 0; j < 12; j++)
        {
            int node = j / 6, k = j % 3;
            bool rotation = j % 6 >= 3;
            for (int sgn = -1; sgn <= 1; sgn += 2)
            {
                var a1 = (double[])u1.Clone(); var a2 = (double[])u2.Clone();
                var q1 = (double[])r1.Clone(); var q2 = (double[])r2.Clone();
                if (!rotation) (node == 0 ? a1 : a2)[k] += sgn * h;
                else
                {
                    var w = new double[3]; w[k] = sgn * h;
                    var src = node == 0 ? r1 : r2;
                    Rotations.Multiply(Exp(w), src, node == 0 ? q1 : q2);
                }
                Assert.True(CorotationalBeam.Evaluate(e.Reference, a1, q1, a2, q2, sgn > 0 ? fp : fm, default, default));
            }
            for (int i = 0; i < 12; i++) fd[12 * i + j] = (fp[i] - fm[i]) / (2 * h);
        }
        return fd;
    }

    [Theory]
    [InlineData(1, false)]
    [InlineData(2, false)]
    [InlineData(3, false)]
    [InlineData(4, true)]
    [InlineData(5, true)]
    public void Tangent_equals_central_differences_of_the_internal_force_for_spin_increments(int seed, bool released)
    {
        var rng = new Random(seed);
        var rel = released ? new BeamReleases(false, true, false, true, false, true) : default;
        var e = RandomElement(rng, rel);
        // a strongly deformed state: translations of 0.3 L, nodal rotations of ~1 rad
        var u1 = RandomVector(rng, 0.6); var u2 = RandomVector(rng, 0.6);
        var r1 = Exp(RandomVector(rng, 1.6)); var r2 = Exp(RandomVector(rng, 1.6));
        var (f, k, _) = Evaluate(e, u1, r1, u2, r2, symmetric: false);
        var fd = FiniteDifferenceTangent(e, u1, r1, u2, r2, 1e-6);
        double scale = k.Max(Math.Abs), worst = 0;
        for (int i = 0; i < 144; i++) worst = Math.Max(worst, Math.Abs(k[i] - fd[i]));
        // measured 4.7×10⁻¹¹ to 2.0×10⁻¹⁰ of the largest entry (the O(h²) truncation of the central difference)
        Assert.True(worst < 2e-9 * scale, $"largest difference {worst / scale:E2} of the largest entry");

        // the skew part K − Kᵀ is −spin(mᵢ) on the diagonal rotation blocks and nothing else
        var skew = new double[144];
        for (int n = 0; n < 2; n++)
        {
            int o = 6 * n + 3;
            var s = new double[9];
            Rotations.Spin(f.AsSpan(o, 3), s);
            for (int a = 0; a < 3; a++)
                for (int b = 0; b < 3; b++)
                    skew[12 * (o + a) + o + b] = s[3 * a + b];
        }
        for (int i = 0; i < 12; i++)
            for (int j = 0; j < 12; j++)
                Assert.True(Math.Abs(k[12 * i + j] - k[12 * j + i] + skew[12 * i + j]) < 1e-15 * scale, $"skew part at [{i},{j}]");

        // and the returned symmetric tangent is the symmetric part of the differences
        var (_, ks, _) = Evaluate(e, u1, r1, u2, r2, symmetric: true);
        for (int i = 0; i < 12; i++)
            for (int j = 0; j < 12; j++)
                Assert.True(Math.Abs(ks[12 * i + j] - 0.5 * (fd[12 * i + j] + fd[12 * j + i])) < 2e-9 * scale, $"symmetric part at [{i},{j}]"); // measured ≤ 1.2×10⁻¹⁰
    }

    /// <summary>
    /// The 4×4 bending block of the linear beam in one plane for (v₁, φ₁, v₂, φ₂), φ = dv/dx, with a hinge at the start,
    /// at the end, both or neither (Przemieniecki 1968, ch. 5 (from memory); the hinged forms by static condensation).
    /// </summary>
    internal static double[,] PlaneBending(double ei, double l, bool hingeStart, bool hingeEnd)
    {
        double a = ei / (l * l * l), b = ei / (l * l), c = ei / l;
        if (hingeStart && hingeEnd) return new double[4, 4];
        if (hingeStart)
            return new[,] { { 3 * a, 0, -3 * a, 3 * b }, { 0, 0, 0, 0 }, { -3 * a, 0, 3 * a, -3 * b }, { 3 * b, 0, -3 * b, 3 * c } };
        if (hingeEnd)
            return new[,] { { 3 * a, 3 * b, -3 * a, 0 }, { 3 * b, 3 * c, -3 * b, 0 }, { -3 * a, -3 * b, 3 * a, 0 }, { 0, 0, 0, 0 } };
        return new[,]
        {
            { 12 * a, 6 * b, -12 * a, 6 * b }, { 6 * b, 4 * c, -6 * b, 2 * c },
            { -12 * a, -6 * b, 12 * a, -6 * b }, { 6 * b, 2 * c, -6 * b, 4 * c },
        };
    }

    /// <summary>The linear 3D frame element in local axes, dofs [u v w θx θy θz] per node.</summary>
    internal static double[] LinearFrameLocal(BeamSection s, double l, BeamReleases r)
    {
        var k = new double[144];
        void Add(int i, int j, double v) => k[12 * i + j] += v;
        double ea = s.E * s.A / l;
        Add(0, 0, ea); Add(6, 6, ea); Add(0, 6, -ea); Add(6, 0, -ea);
        if (!r.StartTorsion && !r.EndTorsion)
        {
            double gj = s.G * s.J / l;
            Add(3, 3, gj); Add(9, 9, gj); Add(3, 9, -gj); Add(9, 3, -gj);
        }
        // x-y plane: v and φ = θz; x-z plane: w and φ = dw/dx = −θy
        int[] xy = [1, 5, 7, 11], xz = [2, 4, 8, 10];
        double[] sxy = [1, 1, 1, 1], sxz = [1, -1, 1, -1];
        var bz = PlaneBending(s.E * s.Iz, l, r.StartBendingZ, r.EndBendingZ);
        var by = PlaneBending(s.E * s.Iy, l, r.StartBendingY, r.EndBendingY);
        for (int i = 0; i < 4; i++)
            for (int j = 0; j < 4; j++)
            {
                Add(xy[i], xy[j], sxy[i] * sxy[j] * bz[i, j]);
                Add(xz[i], xz[j], sxz[i] * sxz[j] * by[i, j]);
            }
        return k;
    }

    /// <summary>K_global = E₀ K_local E₀ᵀ with E₀ = diag(R₀ ×4), R₀ the initial triad (axes as columns).</summary>
    internal static double[] ToGlobal(double[] kl, ReadOnlySpan<double> triad)
    {
        var k = new double[144];
        for (int i = 0; i < 12; i++)
            for (int j = 0; j < 12; j++)
            {
                int bi = i / 3 * 3, bj = j / 3 * 3, a = i % 3, c = j % 3;
                double s = 0;
                for (int p = 0; p < 3; p++)
                    for (int q = 0; q < 3; q++)
                        s += triad[3 * a + p] * kl[12 * (bi + p) + bj + q] * triad[3 * c + q];
                k[12 * i + j] = s;
            }
        return k;
    }

    public static TheoryData<int, bool, bool, bool, bool, bool, bool> ReleaseCases => new()
    {
        { 1, false, false, false, false, false, false },
        { 2, false, false, false, false, false, true },   // pinned in the x-y plane at the end: 3EI/L³
        { 3, false, true, false, false, false, false },   // pinned in the x-z plane at the start
        { 4, true, true, true, false, false, false },     // start fully pinned
        { 5, false, true, true, false, true, true },      // pinned for bending at both ends, torsion held
        { 6, true, true, true, true, true, true },        // a bar
    };

    [Theory]
    [MemberData(nameof(ReleaseCases))]
    public void At_rest_the_tangent_is_the_linear_frame_element_with_its_releases(int seed, bool t1, bool y1, bool z1, bool t2, bool y2, bool z2)
    {
        var rng = new Random(seed);
        var rel = new BeamReleases(t1, y1, z1, t2, y2, z2);
        var e = RandomElement(rng, rel);
        var zero = new double[3];
        var (f, k, _) = Evaluate(e, zero, Identity, zero, Identity);
        Assert.All(f, x => Assert.True(Math.Abs(x) < 1e-15, $"force {x} at rest")); // measured ≤ 2.4×10⁻¹⁷
        double l = CorotationalBeam.InitialLength(e.Reference);
        var expected = ToGlobal(LinearFrameLocal(e.Section, l, rel), e.Reference.AsSpan(4, 9));
        double scale = expected.Max(Math.Abs), worst = 0;
        for (int i = 0; i < 144; i++) worst = Math.Max(worst, Math.Abs(k[i] - expected[i]));
        // measured ≤ 2.5×10⁻¹⁶ (rounding)
        Assert.True(worst < 3e-15 * scale, $"tangent differs from the closed form by {worst / scale:E2} of the largest entry");
    }

    [Fact]
    public void Under_an_axial_force_the_tangent_adds_the_string_stiffness_of_the_chord()
    {
        // A slender member (I/(AL²) = 10⁻⁸) stretched by δ = 10⁻⁶ L: the tangent must be the rest stiffness plus
        // (N/l)(I − r₁r₁ᵀ) on the translations, [1 −1; −1 1] between the nodes, plus the axial modulus's own change
        // (EA/L₀)(l²/L₀² + ε − 1); the bending terms' change with l is O(I/(AL²)) of the string term.
        var rng = new Random(9);
        var e = RandomElement(rng, section: new BeamSection(2e5, 8e4, 1e-2, 1e-10, 2e-10, 1e-10));
        double l0 = CorotationalBeam.InitialLength(e.Reference);
        var triad = e.Reference.AsSpan(4, 9).ToArray();
        double delta = 1e-6 * l0;
        var zero = new double[3];
        var u2 = new[] { delta * triad[0], delta * triad[3], delta * triad[6] };
        var (_, k0, _) = Evaluate(e, zero, Identity, zero, Identity);
        var (f, k, local) = Evaluate(e, zero, Identity, u2, Identity);
        double l = l0 + delta, eps = (2 * l0 * delta + delta * delta) / (2 * l0 * l0), ea = e.Section.E * e.Section.A;
        double n = ea * eps * l / l0;
        Assert.Equal(n, local[6], 1e-12 * n);
        double kAxial = ea / l0 * (l * l / (l0 * l0) + eps - 1);
        var expected = (double[])k0.Clone();
        for (int a = 0; a < 3; a++)
            for (int b = 0; b < 3; b++)
            {
                double rr = triad[3 * a] * triad[3 * b];
                double g = n / l * ((a == b ? 1 : 0) - rr) + kAxial * rr;
                expected[12 * a + b] += g; expected[12 * (6 + a) + 6 + b] += g;
                expected[12 * a + 6 + b] -= g; expected[12 * (6 + a) + b] -= g;
            }
        double worst = 0;
        for (int i = 0; i < 144; i++) worst = Math.Max(worst, Math.Abs(k[i] - expected[i]));
        // measured 1.9×10⁻⁷ (the O(I/(AL²)) bending change and rounding of entries 10⁶ times larger)
        Assert.True(worst < 2e-6 * n / l, $"largest difference {worst / (n / l):E2} of N/l");
    }
}
