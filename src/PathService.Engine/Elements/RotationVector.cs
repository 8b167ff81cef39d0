namespace PathService.Engine.Elements;

/// <summary>
/// Finite rotations kept as rotation vectors ψ (axis × angle, R = exp(ψ̂)) and updated multiplicatively by a spatial spin
/// increment Δθ: R ← exp(Δθ̂)·R. The composition goes through unit quaternions (Euler–Rodrigues parameters), whose
/// product is exact to rounding and whose logarithm, 2·atan2(|v|, w)·v/|v|, is well conditioned at every angle.
/// Sources: J. Argyris, "An excursion into large rotations", Comput. Methods Appl. Mech. Eng. 32 (1982) 85–155;
/// J. C. Simo and L. Vu-Quoc, "A three-dimensional finite-strain rod model. Part II", CMAME 58 (1986) 79–116 (the spatial
/// update); M. A. Crisfield, "Non-linear Finite Element Analysis of Solids and Structures", vol. 2, Wiley 1997, ch. 16.
/// The stored vector is the canonical one, |ψ| ≤ π (a rotation past half a turn is reported as the equivalent one the
/// other way round).
/// </summary>
public static class RotationVector
{
    /// <summary>ψ ← log(exp(Δθ)·exp(ψ)): the rotation vector after a spatial spin increment, in place.</summary>
    public static void Compose(Span<double> psi, double spinX, double spinY, double spinZ)
    {
        var (w1, x1, y1, z1) = Quaternion(spinX, spinY, spinZ);
        var (w2, x2, y2, z2) = Quaternion(psi[0], psi[1], psi[2]);
        // Hamilton product q1 ⊗ q2 (q1 applied after q2).
        double w = w1 * w2 - x1 * x2 - y1 * y2 - z1 * z2;
        double x = w1 * x2 + x1 * w2 + y1 * z2 - z1 * y2;
        double y = w1 * y2 - x1 * z2 + y1 * w2 + z1 * x2;
        double z = w1 * z2 + x1 * y2 - y1 * x2 + z1 * w2;
        Logarithm(w, x, y, z, psi);
    }

    /// <summary>Unit quaternion (w, x, y, z) of the rotation vector θ: (cos(|θ|/2), sin(|θ|/2)·θ/|θ|).</summary>
    public static (double W, double X, double Y, double Z) Quaternion(double tx, double ty, double tz)
    {
        double a2 = tx * tx + ty * ty + tz * tz;
        double a = Math.Sqrt(a2);
        // sin(a/2)/a, by its series near zero (error below 1e-17 for a < 1e-3).
        double s = a < 1e-3 ? 0.5 - a2 / 48.0 + a2 * a2 / 3840.0 : Math.Sin(0.5 * a) / a;
        return (Math.Cos(0.5 * a), s * tx, s * ty, s * tz);
    }

    /// <summary>Rotation vector of a unit quaternion, with |ψ| ≤ π.</summary>
    public static void Logarithm(double w, double x, double y, double z, Span<double> psi)
    {
        // Renormalise (rounding drift of repeated products) and take the half with w ≥ 0: the angle then lies in [0, π].
        double norm = Math.Sqrt(w * w + x * x + y * y + z * z);
        if (w < 0) norm = -norm;
        w /= norm; x /= norm; y /= norm; z /= norm;
        double s = Math.Sqrt(x * x + y * y + z * z);
        // ψ = (2·atan2(s, w)/s)·v; near s = 0: 2/w·(1 − s²/(3w²)) (w ≈ 1 there).
        double f = s < 1e-6 ? 2.0 / w * (1.0 - s * s / (3.0 * w * w)) : 2.0 * Math.Atan2(s, w) / s;
        psi[0] = f * x; psi[1] = f * y; psi[2] = f * z;
    }

    /// <summary>
    /// The rotation matrix R = exp(ψ̂) = I + (sin a/a) ψ̂ + ((1 − cos a)/a²) ψ̂² (Rodrigues), a = |ψ|, row-major into
    /// <paramref name="r"/> (9 entries).
    /// </summary>
    public static void ToMatrix(double px, double py, double pz, Span<double> r)
    {
        double a2 = px * px + py * py + pz * pz;
        double a = Math.Sqrt(a2);
        double c1, c2;
        if (a < 1e-4) { c1 = 1.0 - a2 / 6.0; c2 = 0.5 - a2 / 24.0; }
        else { c1 = Math.Sin(a) / a; c2 = (1.0 - Math.Cos(a)) / a2; }
        r[0] = 1 - c2 * (py * py + pz * pz); r[1] = -c1 * pz + c2 * px * py; r[2] = c1 * py + c2 * px * pz;
        r[3] = c1 * pz + c2 * px * py; r[4] = 1 - c2 * (px * px + pz * pz); r[5] = -c1 * px + c2 * py * pz;
        r[6] = -c1 * py + c2 * px * pz; r[7] = c1 * px + c2 * py * pz; r[8] = 1 - c2 * (px * px + py * py);
    }
}
