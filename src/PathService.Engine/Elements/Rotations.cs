namespace PathService.Engine.Elements;

/// <summary>
/// Finite rotations in three dimensions: the exponential map of a rotation vector θ to a rotation matrix (Rodrigues'
/// formula, O. Rodrigues, 1840), its inverse (the logarithm), composition, the spin (skew) matrix, and the inverse of
/// the tangential transformation with its derivative, as used by corotational beam elements (J.-M. Battini and
/// C. Pacoste, "Co-rotational beam elements with warping effects in instability problems", CMAME 191 (2002)
/// 1755–1789, §2 (from memory); J. C. Simo and L. Vu-Quoc, "A three-dimensional finite-strain rod model. Part II",
/// CMAME 58 (1986) 79–116, for the spatial spin (from memory)).
///
/// Matrices are 3×3, row-major, in spans of 9. With Θ = spin(θ), θ = |θ|:
///   exp(θ) = I + (sin θ/θ) Θ + ((1 − cos θ)/θ²) Θ²
///   a variation δR = spin(δw) R (a spatial spin δw) changes θ by δθ = T⁻¹(θ) δw with
///   T⁻¹(θ) = I − ½Θ + η Θ²,  η = (1 − (θ/2) cot(θ/2)) / θ²,
/// and for a fixed vector m, ∂(T⁻ᵀ m)/∂θ = −½ spin(m) + η (θ mᵀ − 2 m θᵀ + (θ·m) I) + μ (Θ² m) θᵀ,  μ = η'(θ)/θ.
/// Every coefficient switches to its Taylor series at small angles (0.05 for exp and log, 0.3 for η and μ, whose closed
/// forms lose digits to cancellation); the series are kept to the term that makes their truncation error below double
/// rounding there.
/// </summary>
public static class Rotations
{
    // Below these angles the closed forms are replaced by their Taylor series (truncation error < 10⁻¹⁶ there): exp
    // and log only need to avoid 0/0, η and μ lose digits to cancellation like 10⁻¹⁶/θ² and 10⁻¹⁶/θ⁴.
    private const double ExpLogSeriesBelow = 0.05;
    private const double SeriesBelow = 0.3;

    /// <summary>S = spin(v), the matrix with S·a = v × a.</summary>
    public static void Spin(ReadOnlySpan<double> v, Span<double> s)
    {
        s[0] = 0; s[1] = -v[2]; s[2] = v[1];
        s[3] = v[2]; s[4] = 0; s[5] = -v[0];
        s[6] = -v[1]; s[7] = v[0]; s[8] = 0;
    }

    /// <summary>c = a·b for 3×3 matrices (c must not overlap a or b).</summary>
    public static void Multiply(ReadOnlySpan<double> a, ReadOnlySpan<double> b, Span<double> c)
    {
        for (int i = 0; i < 3; i++)
            for (int j = 0; j < 3; j++)
                c[3 * i + j] = a[3 * i] * b[j] + a[3 * i + 1] * b[3 + j] + a[3 * i + 2] * b[6 + j];
    }

    /// <summary>c = aᵀ·b for 3×3 matrices (c must not overlap a or b).</summary>
    public static void MultiplyTransposed(ReadOnlySpan<double> a, ReadOnlySpan<double> b, Span<double> c)
    {
        for (int i = 0; i < 3; i++)
            for (int j = 0; j < 3; j++)
                c[3 * i + j] = a[i] * b[j] + a[3 + i] * b[3 + j] + a[6 + i] * b[6 + j];
    }

    /// <summary>The rotation exp(θ), by Rodrigues' formula; 1 − cos θ is evaluated as 2 sin²(θ/2) to keep its digits.</summary>
    public static void Exp(ReadOnlySpan<double> theta, Span<double> r)
    {
        double t2 = theta[0] * theta[0] + theta[1] * theta[1] + theta[2] * theta[2];
        double t = Math.Sqrt(t2);
        double a, b; // sin θ/θ and (1 − cos θ)/θ²
        if (t < ExpLogSeriesBelow)
        {
            a = 1 - t2 / 6 * (1 - t2 / 20 * (1 - t2 / 42 * (1 - t2 / 72 * (1 - t2 / 110))));
            b = 0.5 * (1 - t2 / 12 * (1 - t2 / 30 * (1 - t2 / 56 * (1 - t2 / 90 * (1 - t2 / 132)))));
        }
        else
        {
            double h = Math.Sin(0.5 * t);
            a = Math.Sin(t) / t;
            b = 2 * h * h / t2;
        }
        double x = theta[0], y = theta[1], z = theta[2];
        // R = I + aΘ + bΘ², Θ² = θθᵀ − θ²I
        r[0] = 1 + b * (x * x - t2); r[1] = -a * z + b * x * y; r[2] = a * y + b * x * z;
        r[3] = a * z + b * x * y; r[4] = 1 + b * (y * y - t2); r[5] = -a * x + b * y * z;
        r[6] = -a * y + b * x * z; r[7] = a * x + b * y * z; r[8] = 1 + b * (z * z - t2);
    }

    /// <summary>
    /// The rotation vector θ with exp(θ) = R, |θ| ≤ π. From the axial vector of the skew part, 2 sin θ n, and the trace,
    /// 1 + 2 cos θ, through atan2 (accurate at every angle); near π, where sin θ carries no digits, the axis comes from
    /// the symmetric part, (R + Rᵀ)/2 = cos θ I + (1 − cos θ) n nᵀ.
    /// </summary>
    public static void Log(ReadOnlySpan<double> r, Span<double> theta)
    {
        double sx = 0.5 * (r[7] - r[5]), sy = 0.5 * (r[2] - r[6]), sz = 0.5 * (r[3] - r[1]); // sin θ · n
        double s = Math.Sqrt(sx * sx + sy * sy + sz * sz);
        double c = 0.5 * (r[0] + r[4] + r[8] - 1);
        double t = Math.Atan2(s, c);
        if (c > -0.9)
        {
            double f; // θ/sin θ
            if (t < ExpLogSeriesBelow)
            {
                double t2 = t * t;
                f = 1 + t2 * (1.0 / 6 + t2 * (7.0 / 360 + t2 * (31.0 / 15120 + t2 * (127.0 / 604800 + t2 * 73.0 / 3421440))));
            }
            else f = t / s;
            theta[0] = f * sx; theta[1] = f * sy; theta[2] = f * sz;
            return;
        }
        // n nᵀ = ((R + Rᵀ)/2 − cos θ I)/(1 − cos θ): take the column with the largest diagonal entry, sign from sin θ·n.
        double d = 1 - c;
        int k = r[0] >= r[4] && r[0] >= r[8] ? 0 : r[4] >= r[8] ? 1 : 2;
        Span<double> n = stackalloc double[3];
        for (int i = 0; i < 3; i++) n[i] = (0.5 * (r[3 * i + k] + r[3 * k + i]) - (i == k ? c : 0)) / d;
        double norm = Math.Sqrt(n[0] * n[0] + n[1] * n[1] + n[2] * n[2]);
        double sign = n[0] * sx + n[1] * sy + n[2] * sz < 0 ? -1 : 1;
        for (int i = 0; i < 3; i++) theta[i] = sign * t * n[i] / norm;
    }

    /// <summary>η(θ) = (1 − (θ/2) cot(θ/2))/θ² and μ(θ) = η'(θ)/θ, the coefficients of T⁻¹ and of its derivative.</summary>
    public static (double Eta, double Mu) InverseTangentCoefficients(double t)
    {
        double t2 = t * t;
        if (t < SeriesBelow)
        {
            double eta = 1.0 / 12 + t2 * (1.0 / 720 + t2 * (1.0 / 30240 + t2 * (1.0 / 1209600 + t2 * (1.0 / 47900160 + t2 * 691.0 / 1307674368000))));
            double mu = 1.0 / 360 + t2 * (1.0 / 7560 + t2 * (1.0 / 201600 + t2 * (1.0 / 5987520 + t2 * (691.0 / 130767436800 + t2 / 6227020800))));
            return (eta, mu);
        }
        double x = 0.5 * t, sx = Math.Sin(x), cot = Math.Cos(x) / sx;
        double e = (1 - x * cot) / t2;
        double de = -0.5 * (cot - x / (sx * sx)) / t2 - 2 * e / t; // dη/dθ
        return (e, de / t);
    }

    /// <summary>v = T⁻ᵀ(θ) m = m + ½ θ × m + η θ × (θ × m): a moment conjugate to δθ turned into one conjugate to the spin.</summary>
    public static void ApplyInverseTangentTransposed(ReadOnlySpan<double> theta, ReadOnlySpan<double> m, Span<double> v)
    {
        double t = Math.Sqrt(theta[0] * theta[0] + theta[1] * theta[1] + theta[2] * theta[2]);
        double eta = InverseTangentCoefficients(t).Eta;
        double tm = theta[0] * m[0] + theta[1] * m[1] + theta[2] * m[2];
        double t2 = t * t;
        for (int i = 0; i < 3; i++)
        {
            int j = (i + 1) % 3, k = (i + 2) % 3;
            double cross = theta[j] * m[k] - theta[k] * m[j];
            v[i] = m[i] + 0.5 * cross + eta * (theta[i] * tm - m[i] * t2);
        }
    }

    /// <summary>T⁻¹(θ) = I − ½Θ + ηΘ² (3×3, row-major).</summary>
    public static void InverseTangent(ReadOnlySpan<double> theta, Span<double> ti)
    {
        double t2 = theta[0] * theta[0] + theta[1] * theta[1] + theta[2] * theta[2];
        double eta = InverseTangentCoefficients(Math.Sqrt(t2)).Eta;
        double x = theta[0], y = theta[1], z = theta[2];
        ti[0] = 1 + eta * (x * x - t2); ti[1] = 0.5 * z + eta * x * y; ti[2] = -0.5 * y + eta * x * z;
        ti[3] = -0.5 * z + eta * x * y; ti[4] = 1 + eta * (y * y - t2); ti[5] = 0.5 * x + eta * y * z;
        ti[6] = 0.5 * y + eta * x * z; ti[7] = -0.5 * x + eta * y * z; ti[8] = 1 + eta * (z * z - t2);
    }

    /// <summary>
    /// D = ∂(T⁻ᵀ(θ) m)/∂θ at fixed m = −½ spin(m) + η (θ mᵀ − 2 m θᵀ + (θ·m) I) + μ (Θ² m) θᵀ (3×3, row-major).
    /// </summary>
    public static void InverseTangentTransposedDerivative(ReadOnlySpan<double> theta, ReadOnlySpan<double> m, Span<double> d)
    {
        double t2 = theta[0] * theta[0] + theta[1] * theta[1] + theta[2] * theta[2];
        var (eta, mu) = InverseTangentCoefficients(Math.Sqrt(t2));
        double tm = theta[0] * m[0] + theta[1] * m[1] + theta[2] * m[2];
        Span<double> w = stackalloc double[3]; // Θ² m = θ(θ·m) − m θ²
        for (int i = 0; i < 3; i++) w[i] = theta[i] * tm - m[i] * t2;
        for (int i = 0; i < 3; i++)
            for (int j = 0; j < 3; j++)
                d[3 * i + j] = eta * (theta[i] * m[j] - 2 * m[i] * theta[j] + (i == j ? tm : 0)) + mu * w[i] * theta[j];
        d[1] += 0.5 * m[2]; d[2] -= 0.5 * m[1];
        d[3] -= 0.5 * m[2]; d[5] += 0.5 * m[0];
        d[6] += 0.5 * m[1]; d[7] -= 0.5 * m[0];
    }
}
