using System.Numerics;

using PathService.Engine.Elements;

namespace PathService.Engine.Tests.Unit;

/// <summary>
/// Reference for <see cref="BarDesignTerms"/>: the same derivatives by complex step. The design derivatives of one Total Lagrangian bar at a fixed displacement state, for the sensitivity of a critical
/// load: of its internal force and self-weight (the residual's parts) and of the tangent's quadratic form φᵀK φ, for
/// p = area, modulus and the six end coordinates. Both are obtained by the complex-step derivative
/// f'(p) = Im f(p + ih) / h (W. Squire and G. Trapp, "Using complex variables to estimate derivatives of real functions",
/// SIAM Review 40, 1998; J. R. R. A. Martins, P. Sturdza and J. J. Alonso, "The complex-step derivative approximation",
/// ACM TOMS 29, 2003), which has no subtractive cancellation: with h = 1e-30 the derivatives are exact to rounding.
/// The bar's formulas are those of <see cref="BarKinematics"/> (elastic law S = Eε + S0), written over complex numbers.
/// The self-weight of the bar, ½ρA0L0 g (c + λr) at each end (c and r the self-weight factors of the constant and the
/// reference load), is part of the residual and so of wᵀ∂r/∂p.
/// </summary>
internal static class ComplexStepBarTerms
{
    /// <summary>Parameters of one bar in the order of the derivative arrays: area, modulus, x_i, y_i, z_i, x_j, y_j, z_j.</summary>
    public const int ParameterCount = BarDesignTerms.ParameterCount;

    /// <summary>
    /// Derivatives with respect to the eight parameters of the bar's end-node internal force f_j (the start node gets
    /// −f_j) into <paramref name="force"/> (8 × 3, parameter-major), of its self-weight load at each end node into
    /// <paramref name="weight"/> (8 × 3; the same vector at both ends, entering the residual with a minus sign), and,
    /// when a mode φ is given (start node 0..2, end node 3..5), of φᵀK_bar φ into <paramref name="quadratic"/> (8).
    /// </summary>
    public static void Derivatives(in BarDesignTerms.Bar bar, ReadOnlySpan<double> phi, Span<double> force, Span<double> weight, Span<double> quadratic)
    {
        Span<double> p = stackalloc double[ParameterCount];
        p[0] = bar.Area; p[1] = bar.Modulus;
        p[2] = bar.Xi; p[3] = bar.Yi; p[4] = bar.Zi; p[5] = bar.Xj; p[6] = bar.Yj; p[7] = bar.Zj;
        Span<Complex> f = stackalloc Complex[3];
        Span<Complex> sw = stackalloc Complex[3];
        for (int k = 0; k < ParameterCount; k++)
        {
            double h = 1e-30 * Math.Max(1.0, Math.Abs(p[k]));
            var q = Evaluate(bar, p, k, h, phi, f, sw);
            for (int c = 0; c < 3; c++)
            {
                force[3 * k + c] = f[c].Imaginary / h;
                weight[3 * k + c] = sw[c].Imaginary / h;
            }
            if (!quadratic.IsEmpty) quadratic[k] = q.Imaginary / h;
        }
    }

    /// <summary>f_j, the self-weight load per end node and φᵀK_bar φ with parameter k perturbed by ih.</summary>
    private static Complex Evaluate(in BarDesignTerms.Bar bar, ReadOnlySpan<double> p, int k, double h, ReadOnlySpan<double> phi, Span<Complex> f, Span<Complex> sw)
    {
        Span<Complex> c = stackalloc Complex[ParameterCount];
        for (int i = 0; i < ParameterCount; i++) c[i] = new Complex(p[i], i == k ? h : 0);
        Complex area = c[0], modulus = c[1];
        Complex X = c[5] - c[2], Y = c[6] - c[3], Z = c[7] - c[4];
        Complex l2 = X * X + Y * Y + Z * Z;
        Complex l0 = Complex.Sqrt(l2);
        // Same strain expression as BarKinematics.Evaluate (free of cancellation at small strains).
        Complex strain = (2 * (X * bar.Dx + Y * bar.Dy + Z * bar.Dz) + bar.Dx * bar.Dx + bar.Dy * bar.Dy + bar.Dz * bar.Dz) / (2 * l2);
        Complex stress = modulus * strain + bar.InitialStress;
        Complex cx = X + bar.Dx, cy = Y + bar.Dy, cz = Z + bar.Dz;
        // Internal force on the end node f_j = (A S / L0) c.
        Complex t = area * stress / l0;
        f[0] = t * cx; f[1] = t * cy; f[2] = t * cz;
        Complex half = 0.5 * bar.Density * bar.SelfWeightFactor * area * l0;
        sw[0] = half * bar.Gx; sw[1] = half * bar.Gy; sw[2] = half * bar.Gz;
        if (phi.IsEmpty) return Complex.Zero;
        double fx = phi[3] - phi[0], fy = phi[4] - phi[1], fz = phi[5] - phi[2];
        Complex cphi = cx * fx + cy * fy + cz * fz;
        // φᵀKφ = (E A / L0³)(c·φd)² + (S A / L0)|φd|²
        return modulus * area / (l2 * l0) * cphi * cphi + t * (fx * fx + fy * fy + fz * fz);
    }
}
