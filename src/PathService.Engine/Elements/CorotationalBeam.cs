namespace PathService.Engine.Elements;

/// <summary>
/// Three-dimensional corotational beam element: a linear elastic Euler–Bernoulli beam (<see cref="BeamLocalStiffness"/>)
/// carried by an element frame that follows the rigid-body motion, so that displacements and rotations may be arbitrarily
/// large while the strains stay small. The approach is M. A. Crisfield's ("A consistent co-rotational formulation for
/// non-linear, three-dimensional, beam-elements", CMAME 81 (1990) 131–150; "Non-linear Finite Element Analysis of Solids
/// and Structures", Vol. 2, Wiley 1997, ch. 17 (from memory)); the element frame, the matrix G of its spin and the
/// structure of the tangent follow J.-M. Battini and C. Pacoste, "Co-rotational beam elements with warping effects in
/// instability problems", CMAME 191 (2002) 1755–1789, §3 (from memory). Derivation in docs/theory.md §15.
///
/// Kinematics (current nodal triads Tᵢ = Rᵢ R₀, with R₀ the initial triad, columns e₁ e₂ e₃):
///   element frame R_r = [r₁ r₂ r₃]: r₁ along the current chord d = x₂ − x₁ (length l); r₃ = r₁ × q/|r₁ × q| with
///   q = ½(T₁ + T₂) e₂ the mean of the nodes' second axes (Battini and Pacoste's choice); r₂ = r₃ × r₁;
///   local deformations ū = l − L₀, θ̄ᵢ = log(R_rᵀ Tᵢ) (the rotation of each node relative to the frame); the axial
///   force N = EA ε l/L₀ with the Green–Lagrange strain ε = (l² − L₀²)/(2L₀²), as for the bars (equal to (EA/L₀)ū to
///   first order), the moments linear in θ̄.
/// Variations with spatial spins δwᵢ (Tᵢ ← exp(δwᵢ) Tᵢ), written in the frame's components (·̃ = R_rᵀ·):
///   the frame spins by ω = G̃ᵀ δp̃ (rows: torsion from the constraint r₃·q = 0, then −δd̃₃/l, δd̃₂/l);
///   δū = r̃ δp̃, δθ̄ᵢ = T⁻¹(θ̄ᵢ)(δw̃ᵢ − ω) (<see cref="Rotations"/>).
/// Internal force f = E B̃ᵀ f_a with f_a = [N, T⁻ᵀ(θ̄₁)M̄₁, T⁻ᵀ(θ̄₂)M̄₂], [M̄₁, M̄₂] = K_l [θ̄₁, θ̄₂], E = diag(R_r ×4).
/// Tangent with respect to the spins, K = E K̃ Eᵀ, K̃ = B̃ᵀ K_a B̃ − Σ_b spin(f̃_b) G̃ᵀ − ∂(G̃ M)/∂p̃, M = m̃₁ + m̃₂,
/// K_a = B_aᵀ K_l B_a + diag(0, ∂(T⁻ᵀM̄₁)/∂θ̄ T⁻¹, ∂(T⁻ᵀM̄₂)/∂θ̄ T⁻¹). This K is the exact derivative of f for spin
/// increments; it is not symmetric: K − Kᵀ = −spin(mᵢ) on the diagonal rotation blocks (mᵢ the internal nodal moment),
/// so its symmetric part is the Hessian of the strain energy in rotation-vector coordinates centred at the current
/// state and equals K wherever the nodal moments balance (equilibrium without applied moments). The symmetric part is
/// what the assembled LDLᵀ takes, as is usual for spin-updated rotations (J. C. Simo and L. Vu-Quoc, CMAME 58 (1986)
/// 79–116; Crisfield 1997, §17 (from memory)).
///
/// Data: a reference span of <see cref="ReferenceSize"/> values per element, written once by <see cref="TryPrepare"/>
/// (initial chord, length, triad, condensed local stiffness); <see cref="Evaluate"/> allocates nothing.
/// </summary>
public static class CorotationalBeam
{
    /// <summary>Values per element in the reference span: chord (3), length (1), initial triad (9), local stiffness (49).</summary>
    public const int ReferenceSize = 62;
    private const int ChordAt = 0, LengthAt = 3, TriadAt = 4, StiffnessAt = 13;

    /// <summary>
    /// Initial triad from the end coordinates and the orientation vector v: e₁ along the member, e₂ = normalised
    /// v − (v·e₁)e₁, e₃ = e₁ × e₂; row-major with the axes as columns. False when the member has no length or v is
    /// (nearly, 10⁻⁹) parallel to it.
    /// </summary>
    public static bool TryInitialTriad(ReadOnlySpan<double> x1, ReadOnlySpan<double> x2, ReadOnlySpan<double> v, Span<double> triad)
    {
        double dx = x2[0] - x1[0], dy = x2[1] - x1[1], dz = x2[2] - x1[2];
        double l = Math.Sqrt(dx * dx + dy * dy + dz * dz), vn = Math.Sqrt(v[0] * v[0] + v[1] * v[1] + v[2] * v[2]);
        if (!(l > 0) || !(vn > 0)) return false;
        dx /= l; dy /= l; dz /= l;
        double vx = v[0] / vn, vy = v[1] / vn, vz = v[2] / vn;
        double a = vx * dx + vy * dy + vz * dz;
        double yx = vx - a * dx, yy = vy - a * dy, yz = vz - a * dz;
        double yn = Math.Sqrt(yx * yx + yy * yy + yz * yz);
        if (!(yn > 1e-9)) return false;
        yx /= yn; yy /= yn; yz /= yn;
        triad[0] = dx; triad[3] = dy; triad[6] = dz;
        triad[1] = yx; triad[4] = yy; triad[7] = yz;
        triad[2] = dy * yz - dz * yy; triad[5] = dz * yx - dx * yz; triad[8] = dx * yy - dy * yx;
        return true;
    }

    /// <summary>Writes an element's reference data; false when <see cref="TryInitialTriad"/> fails.</summary>
    public static bool TryPrepare(ReadOnlySpan<double> x1, ReadOnlySpan<double> x2, ReadOnlySpan<double> orientation,
        in BeamSection section, in BeamReleases releases, Span<double> reference)
    {
        if (!TryInitialTriad(x1, x2, orientation, reference.Slice(TriadAt, 9))) return false;
        double l2 = 0;
        for (int i = 0; i < 3; i++) { reference[ChordAt + i] = x2[i] - x1[i]; l2 += reference[ChordAt + i] * reference[ChordAt + i]; }
        reference[LengthAt] = Math.Sqrt(l2);
        BeamLocalStiffness.Build(section, reference[LengthAt], releases, reference.Slice(StiffnessAt, 49));
        return true;
    }

    /// <summary>Initial length of a prepared element.</summary>
    public static double InitialLength(ReadOnlySpan<double> reference) => reference[LengthAt];

    /// <summary>
    /// Internal force (12, global axes, ordered [u₁, θ₁, u₂, θ₂]), optionally the 12×12 tangent with respect to
    /// [δu₁, δw₁, δu₂, δw₂] (row-major; symmetric part unless <paramref name="symmetricTangent"/> is false) and the
    /// member-end actions in the current element axes [F₁, M₁, F₂, M₂] (force and moment on the member at each end;
    /// F₂ₓ = N, tension positive; Mₓ torsion, M_y and M_z bending). Empty spans skip an output. The rotations are the
    /// nodal rotation matrices relative to the initial configuration (row-major). False, with the outputs untouched,
    /// when the nodes have twisted a quarter turn relative to each other, where the element frame is undefined.
    /// </summary>
    public static bool Evaluate(ReadOnlySpan<double> reference, ReadOnlySpan<double> u1, ReadOnlySpan<double> rot1,
        ReadOnlySpan<double> u2, ReadOnlySpan<double> rot2, Span<double> force, Span<double> tangent, Span<double> endForces,
        bool symmetricTangent = true)
    {
        ReadOnlySpan<double> r0 = reference.Slice(TriadAt, 9), kl = reference.Slice(StiffnessAt, 49);
        double length0 = reference[LengthAt];

        // Current chord and the axial Green–Lagrange strain ε = (l² − L₀²)/(2L₀²), evaluated as (2 d₀·Δu + Δu·Δu)/(2L₀²)
        // to keep its digits (the bars' strain, BarKinematics).
        Span<double> d = stackalloc double[3];
        double dd = 0, grow = 0;
        for (int i = 0; i < 3; i++)
        {
            double du = u2[i] - u1[i];
            d[i] = reference[ChordAt + i] + du;
            grow += 2 * reference[ChordAt + i] * du + du * du;
            dd += d[i] * d[i];
        }
        double l = Math.Sqrt(dd);
        double strain = grow / (2 * length0 * length0);

        // Nodal triads Tᵢ = Rᵢ R₀ and the mean second axis q.
        Span<double> t1 = stackalloc double[9], t2 = stackalloc double[9];
        Rotations.Multiply(rot1, r0, t1);
        Rotations.Multiply(rot2, r0, t2);
        Span<double> rr = stackalloc double[9]; // element frame, columns r₁ r₂ r₃
        double qx = 0.5 * (t1[1] + t2[1]), qy = 0.5 * (t1[4] + t2[4]), qz = 0.5 * (t1[7] + t2[7]);
        double r1x = d[0] / l, r1y = d[1] / l, r1z = d[2] / l;
        double r3x = r1y * qz - r1z * qy, r3y = r1z * qx - r1x * qz, r3z = r1x * qy - r1y * qx;
        double r3n = Math.Sqrt(r3x * r3x + r3y * r3y + r3z * r3z);
        if (!(r3n > 1e-12)) return false;
        r3x /= r3n; r3y /= r3n; r3z /= r3n;
        rr[0] = r1x; rr[3] = r1y; rr[6] = r1z;
        rr[2] = r3x; rr[5] = r3y; rr[8] = r3z;
        rr[1] = r3y * r1z - r3z * r1y; rr[4] = r3z * r1x - r3x * r1z; rr[7] = r3x * r1y - r3y * r1x;

        // q̃ᵢ = R_rᵀ Tᵢ e₂ (second columns of R̄ᵢ = R_rᵀ Tᵢ); q̃ = ½(q̃₁ + q̃₂) has no third component by construction.
        Span<double> rb1 = stackalloc double[9], rb2 = stackalloc double[9];
        Rotations.MultiplyTransposed(rr, t1, rb1);
        Rotations.MultiplyTransposed(rr, t2, rb2);
        double qm0 = 0.5 * (rb1[1] + rb2[1]), qm1 = 0.5 * (rb1[4] + rb2[4]);
        if (!(qm1 > 1e-12)) return false;

        // Local deformations and forces: p_l = [ū, θ̄₁, θ̄₂]. The axial force conjugate to ū = l − L₀ comes from the
        // energy ½ EA L₀ ε², N = EA ε l/L₀, with tangent dN/dl = (EA/L₀)(l²/L₀² + ε): the bar's law, so that a beam
        // released at every rotation is the bar exactly; to first order in ε it is N = (EA/L₀) ū. The rotations are linear.
        Span<double> pl = stackalloc double[7], fl = stackalloc double[7];
        pl[0] = l - length0;
        Rotations.Log(rb1, pl.Slice(1, 3));
        Rotations.Log(rb2, pl.Slice(4, 3));
        fl[0] = kl[0] * strain * l;
        for (int i = 1; i < 7; i++)
        {
            double s = 0;
            for (int j = 1; j < 7; j++) s += kl[7 * i + j] * pl[j];
            fl[i] = s;
        }

        // f_a = [N, m̃₁, m̃₂]: the local moments made conjugate to the spins.
        Span<double> fa = stackalloc double[7];
        fa[0] = fl[0];
        Rotations.ApplyInverseTangentTransposed(pl.Slice(1, 3), fl.Slice(1, 3), fa.Slice(1, 3));
        Rotations.ApplyInverseTangentTransposed(pl.Slice(4, 3), fl.Slice(4, 3), fa.Slice(4, 3));

        // G̃ᵀ (3×12): the frame's spin ω = G̃ᵀ δp̃.
        double eta = qm0 / qm1, e11 = rb1[1] / qm1, e12 = rb1[4] / qm1, e21 = rb2[1] / qm1, e22 = rb2[4] / qm1;
        Span<double> g = stackalloc double[36];
        g.Clear();
        g[2] = eta / l; g[3] = 0.5 * e12; g[4] = -0.5 * e11; g[8] = -eta / l; g[9] = 0.5 * e22; g[10] = -0.5 * e21;
        g[12 + 2] = 1 / l; g[12 + 8] = -1 / l;
        g[24 + 1] = -1 / l; g[24 + 7] = 1 / l;

        // B̃ (7×12): δū = r̃ δp̃, δw̄ᵢ = δw̃ᵢ − ω.
        Span<double> b = stackalloc double[84];
        b.Clear();
        b[0] = -1; b[6] = 1;
        for (int k = 0; k < 3; k++)
            for (int j = 0; j < 12; j++)
            {
                b[12 * (1 + k) + j] = -g[12 * k + j];
                b[12 * (4 + k) + j] = -g[12 * k + j];
            }
        for (int k = 0; k < 3; k++) { b[12 * (1 + k) + 3 + k] += 1; b[12 * (4 + k) + 9 + k] += 1; }

        // f̃ = B̃ᵀ f_a, then f = E f̃.
        Span<double> ft = stackalloc double[12];
        for (int j = 0; j < 12; j++)
        {
            double s = 0;
            for (int i = 0; i < 7; i++) s += b[12 * i + j] * fa[i];
            ft[j] = s;
        }
        if (!force.IsEmpty) RotateBlocks(rr, ft, force);
        if (!endForces.IsEmpty) ft.CopyTo(endForces);
        if (tangent.IsEmpty) return true;

        Span<double> klt = stackalloc double[49];
        kl.CopyTo(klt);
        klt[0] = kl[0] * (l * l / (length0 * length0) + strain);
        Span<double> kt = stackalloc double[144];
        MaterialPart(klt, pl, fl, b, kt);
        GeometricPart(ft, fa, g, b, rb1, rb2, qm1, eta, e11, e12, e21, e22, l, kt);
        // sym(E K̃ Eᵀ) = E sym(K̃) Eᵀ: symmetrising first lets the rotation below form only the upper blocks.
        if (symmetricTangent)
            for (int i = 0; i < 12; i++)
                for (int j = i + 1; j < 12; j++)
                {
                    double s = 0.5 * (kt[12 * i + j] + kt[12 * j + i]);
                    kt[12 * i + j] = s; kt[12 * j + i] = s;
                }
        RotateTangent(rr, kt, tangent, symmetricTangent);
        return true;
    }

    // Rows of B̃ that can be non-zero, column by column (B̃'s structure: the axial row touches only the translations
    // along the chord, G̃ᵀ has 10 non-zeros, the identities sit on the spins): 26 of its 84 entries.
    private static ReadOnlySpan<byte> BRows => [0, 3, 6, 1, 2, 4, 5, 1, 4, 1, 2, 4, 3, 0, 3, 6, 1, 2, 4, 5, 1, 4, 1, 4, 5, 6];
    private static ReadOnlySpan<byte> BColumnStart => [0, 1, 3, 7, 9, 12, 13, 14, 16, 20, 22, 25, 26];

    /// <summary>
    /// K̃ = B̃ᵀ K_a B̃ with K_a = B_aᵀ K_l B_a + diag(0, Dᵢ T⁻¹(θ̄ᵢ)), Dᵢ = ∂(T⁻ᵀ M̄ᵢ)/∂θ̄ at fixed M̄ᵢ. B_a is block
    /// diagonal (1, T⁻¹(θ̄₁), T⁻¹(θ̄₂)) and B̃ is sparse (<see cref="BRows"/>), so both products run over their
    /// non-zero blocks and entries only (about 800 multiplications instead of 2,300 for the dense products).
    /// </summary>
    private static void MaterialPart(ReadOnlySpan<double> kl, ReadOnlySpan<double> pl, ReadOnlySpan<double> fl,
        ReadOnlySpan<double> b, Span<double> kt)
    {
        Span<double> ti = stackalloc double[18], dm = stackalloc double[9], ka = stackalloc double[49], klba = stackalloc double[49];
        ka.Clear();
        for (int n = 0; n < 2; n++)
        {
            int o = 1 + 3 * n;
            var t = ti.Slice(9 * n, 9);
            Rotations.InverseTangent(pl.Slice(o, 3), t);
            // the moment-derivative block Dᵢ T⁻¹ (the K_h part)
            Rotations.InverseTangentTransposedDerivative(pl.Slice(o, 3), fl.Slice(o, 3), dm);
            for (int i = 0; i < 3; i++)
                for (int j = 0; j < 3; j++)
                    ka[7 * (o + i) + o + j] = dm[3 * i] * t[j] + dm[3 * i + 1] * t[3 + j] + dm[3 * i + 2] * t[6 + j];
        }
        // K_l B_a, column block by column block
        for (int i = 0; i < 7; i++)
        {
            klba[7 * i] = kl[7 * i];
            for (int n = 0; n < 2; n++)
            {
                int o = 1 + 3 * n, r = 7 * i + o;
                var t = ti.Slice(9 * n, 9);
                for (int j = 0; j < 3; j++)
                    klba[r + j] = kl[r] * t[j] + kl[r + 1] * t[3 + j] + kl[r + 2] * t[6 + j];
            }
        }
        // K_a += B_aᵀ (K_l B_a), row block by row block
        for (int j = 0; j < 7; j++) ka[j] += klba[j];
        for (int n = 0; n < 2; n++)
        {
            int o = 1 + 3 * n;
            var t = ti.Slice(9 * n, 9);
            for (int i = 0; i < 3; i++)
                for (int j = 0; j < 7; j++)
                    ka[7 * (o + i) + j] += t[i] * klba[7 * o + j] + t[3 + i] * klba[7 * (o + 1) + j] + t[6 + i] * klba[7 * (o + 2) + j];
        }
        // K_a B̃ (7×12) over B̃'s non-zeros, then K̃ = B̃ᵀ (K_a B̃)
        var rows = BRows;
        var start = BColumnStart;
        Span<double> kab = stackalloc double[84];
        kab.Clear();
        for (int j = 0; j < 12; j++)
            for (int p = start[j]; p < start[j + 1]; p++)
            {
                int k = rows[p];
                double v = b[12 * k + j];
                for (int i = 0; i < 7; i++) kab[12 * i + j] += ka[7 * i + k] * v;
            }
        for (int i = 0; i < 12; i++)
        {
            var row = kt.Slice(12 * i, 12);
            row.Clear();
            for (int p = start[i]; p < start[i + 1]; p++)
            {
                int k = rows[p];
                double v = b[12 * k + i];
                var src = kab.Slice(12 * k, 12);
                for (int j = 0; j < 12; j++) row[j] += v * src[j];
            }
        }
    }

    /// <summary>
    /// Adds the terms from the change of B̃ at fixed f_a: −spin(f̃_b) G̃ᵀ on every block row b (the frame turning the
    /// local force components) and −∂(G̃ M)/∂p̃ (G̃ depends on l and on the local components of the nodes' second axes).
    /// </summary>
    private static void GeometricPart(ReadOnlySpan<double> ft, ReadOnlySpan<double> fa, ReadOnlySpan<double> g,
        ReadOnlySpan<double> b, ReadOnlySpan<double> rb1, ReadOnlySpan<double> rb2, double qm1,
        double eta, double e11, double e12, double e21, double e22, double l, Span<double> kt)
    {
        for (int blk = 0; blk < 4; blk++)
        {
            double fx = ft[3 * blk], fy = ft[3 * blk + 1], fz = ft[3 * blk + 2];
            for (int j = 0; j < 12; j++)
            {
                double gx = g[j], gy = g[12 + j], gz = g[24 + j];
                // spin(f) ω = f × ω
                kt[12 * (3 * blk) + j] -= fy * gz - fz * gy;
                kt[12 * (3 * blk + 1) + j] -= fz * gx - fx * gz;
                kt[12 * (3 * blk + 2) + j] -= fx * gy - fy * gx;
            }
        }

        double mx = fa[1] + fa[4], my = fa[2] + fa[5], mz = fa[3] + fa[6];
        double invL = 1 / l, invL2 = invL * invL;
        for (int j = 0; j < 12; j++)
        {
            // δq̃ᵢ = (δw̃ᵢ − ω) × q̃ᵢ, with δw̃ᵢ − ω the rows of B̃ for node i.
            double a1x = b[12 * 1 + j], a1y = b[12 * 2 + j], a1z = b[12 * 3 + j];
            double a2x = b[12 * 4 + j], a2y = b[12 * 5 + j], a2z = b[12 * 6 + j];
            double q1x = rb1[1], q1y = rb1[4], q1z = rb1[7], q2x = rb2[1], q2y = rb2[4], q2z = rb2[7];
            double dq1x = a1y * q1z - a1z * q1y, dq1y = a1z * q1x - a1x * q1z;
            double dq2x = a2y * q2z - a2z * q2y, dq2y = a2z * q2x - a2x * q2z;
            double dqmx = 0.5 * (dq1x + dq2x), dqmy = 0.5 * (dq1y + dq2y);
            double dEta = (dqmx - eta * dqmy) / qm1;
            double dE11 = (dq1x - e11 * dqmy) / qm1, dE12 = (dq1y - e12 * dqmy) / qm1;
            double dE21 = (dq2x - e21 * dqmy) / qm1, dE22 = (dq2y - e22 * dqmy) / qm1;
            double dInvL = -b[j] * invL2; // δ(1/l) = −δd̃ₓ/l², δd̃ₓ = r̃ δp̃
            double gy = -mz * dInvL;                                // δ of g[u₁y] = −M_z/l
            double gz = mx * dEta * invL + (eta * mx + my) * dInvL; // δ of g[u₁z] = (η M_x + M_y)/l
            kt[12 * 1 + j] -= gy; kt[12 * 2 + j] -= gz;
            kt[12 * 7 + j] += gy; kt[12 * 8 + j] += gz;
            kt[12 * 3 + j] -= 0.5 * mx * dE12; kt[12 * 4 + j] += 0.5 * mx * dE11;
            kt[12 * 9 + j] -= 0.5 * mx * dE22; kt[12 * 10 + j] += 0.5 * mx * dE21;
        }
    }

    /// <summary>
    /// K = E K̃ Eᵀ with E = diag(R_r ×4), one 3×3 block at a time (R_r K̃_pq R_rᵀ); when K̃ is symmetric only the upper
    /// blocks (and the upper half of the diagonal blocks) are formed and mirrored, so K is exactly symmetric.
    /// </summary>
    private static void RotateTangent(ReadOnlySpan<double> rr, ReadOnlySpan<double> kt, Span<double> k, bool symmetric)
    {
        Span<double> tmp = stackalloc double[9];
        for (int p = 0; p < 4; p++)
            for (int q = symmetric ? p : 0; q < 4; q++)
            {
                int at = 36 * p + 3 * q;
                // tmp = R_r K̃_pq
                for (int i = 0; i < 3; i++)
                    for (int j = 0; j < 3; j++)
                        tmp[3 * i + j] = rr[3 * i] * kt[at + j] + rr[3 * i + 1] * kt[at + 12 + j] + rr[3 * i + 2] * kt[at + 24 + j];
                for (int i = 0; i < 3; i++)
                    for (int j = symmetric && p == q ? i : 0; j < 3; j++)
                    {
                        double s = tmp[3 * i] * rr[3 * j] + tmp[3 * i + 1] * rr[3 * j + 1] + tmp[3 * i + 2] * rr[3 * j + 2];
                        k[at + 12 * i + j] = s;
                        if (symmetric) k[36 * q + 3 * p + 12 * j + i] = s;
                    }
            }
    }

    /// <summary>y = E x with E = diag(R_r, R_r, R_r, R_r).</summary>
    private static void RotateBlocks(ReadOnlySpan<double> rr, ReadOnlySpan<double> x, Span<double> y)
    {
        for (int blk = 0; blk < 4; blk++)
            for (int i = 0; i < 3; i++)
                y[3 * blk + i] = rr[3 * i] * x[3 * blk] + rr[3 * i + 1] * x[3 * blk + 1] + rr[3 * i + 2] * x[3 * blk + 2];
    }
}
