using System.Runtime.CompilerServices;

namespace PathService.Engine.Elements;

/// <summary>
/// The design derivatives of one Total Lagrangian bar (elastic law S = Eε + S0, <see cref="BarKinematics"/>) at a
/// fixed displacement state, for the sensitivity of a critical load: of its end-node internal force f_j = (A S/L0) c
/// (the start node gets −f_j), of its self-weight load ½ρ s A L0 g at each end (s the combined self-weight factor),
/// and of the tangent's quadratic form q = φᵀK_barφ = (EA/L0³)(c·φ_d)² + (SA/L0)|φ_d|², with respect to the area A,
/// the modulus E and the six end coordinates. With X = X_j − X_i, L0 = |X|, c = X + d and ε = c·c/(2L0²) − ½:
///     ∂ε/∂X_k = (c_k − (1 + 2ε) X_k)/L0²,   ∂L0/∂X_k = X_k/L0,
///     ∂f_j/∂X_k = A[(E ∂ε/∂X_k /L0 − S X_k/L0³) c + (S/L0) e_k],
///     ∂q/∂X_k = EA[2(c·φ_d) φ_d,k /L0³ − 3 X_k (c·φ_d)²/L0⁵] + A|φ_d|² (E ∂ε/∂X_k /L0 − S X_k/L0³),
/// and the start-node coordinates give the negatives (derivation in docs/theory.md §13). The unit tests compare every
/// entry with complex-step derivatives of the bar's own formulas.
/// </summary>
internal static class BarDesignTerms
{
    /// <summary>Parameters of one bar in the order of the derivative arrays: area, modulus, x_i, y_i, z_i, x_j, y_j, z_j.</summary>
    public const int ParameterCount = 8;

    public readonly record struct Bar(
        double Xi, double Yi, double Zi, double Xj, double Yj, double Zj, double Area, double Modulus, double InitialStress,
        double Dx, double Dy, double Dz, double Density, double SelfWeightFactor, double Gx, double Gy, double Gz);

    /// <summary>
    /// Derivatives with respect to the eight parameters of f_j into <paramref name="force"/> (8 × 3, parameter-major),
    /// of the self-weight load at each end node into <paramref name="weight"/> (8 × 3; the same vector at both ends,
    /// entering the residual with a minus sign), and, when a mode φ is given (start node 0..2, end node 3..5), of
    /// φᵀK_barφ into <paramref name="quadratic"/> (8).
    /// </summary>
    // Called once per bar per critical point, so it is rarely re-jitted by tiering: optimise it from the first call.
    [MethodImpl(MethodImplOptions.AggressiveOptimization)]
    /// <param name="forces">False when only <paramref name="quadratic"/> is wanted (another mode of the same bar):
    /// <paramref name="force"/> and <paramref name="weight"/> are then left as they are.</param>
    public static void Derivatives(in Bar bar, ReadOnlySpan<double> phi, Span<double> force, Span<double> weight, Span<double> quadratic, bool forces = true)
    {
        double X = bar.Xj - bar.Xi, Y = bar.Yj - bar.Yi, Z = bar.Zj - bar.Zi;
        double l2 = X * X + Y * Y + Z * Z, l0 = Math.Sqrt(l2), l3 = l2 * l0;
        double strain = (2 * (X * bar.Dx + Y * bar.Dy + Z * bar.Dz) + bar.Dx * bar.Dx + bar.Dy * bar.Dy + bar.Dz * bar.Dz) / (2 * l2);
        double E = bar.Modulus, A = bar.Area, S = E * strain + bar.InitialStress;
        double cx = X + bar.Dx, cy = Y + bar.Dy, cz = Z + bar.Dz;
        double t = A * S / l0;
        double half = 0.5 * bar.Density * bar.SelfWeightFactor;
        bool withMode = !phi.IsEmpty && !quadratic.IsEmpty;
        double fx = 0, fy = 0, fz = 0, cphi = 0, ff = 0;
        if (withMode)
        {
            fx = phi[3] - phi[0]; fy = phi[4] - phi[1]; fz = phi[5] - phi[2];
            cphi = cx * fx + cy * fy + cz * fz;
            ff = fx * fx + fy * fy + fz * fz;
        }

        // Area: f, the self-weight and q are all proportional to A. Modulus: S = Eε + S0, so ∂S/∂E = ε.
        double fe = A * strain / l0;
        if (forces)
        {
            force[0] = S / l0 * cx; force[1] = S / l0 * cy; force[2] = S / l0 * cz;
            weight[0] = half * l0 * bar.Gx; weight[1] = half * l0 * bar.Gy; weight[2] = half * l0 * bar.Gz;
            force[3] = fe * cx; force[4] = fe * cy; force[5] = fe * cz;
            weight[3] = weight[4] = weight[5] = 0;
        }
        if (withMode)
        {
            quadratic[0] = E / l3 * cphi * cphi + S / l0 * ff;
            quadratic[1] = A / l3 * cphi * cphi + fe * ff;
        }

        // End coordinates (k = 0, 1, 2 for x, y, z of the end node); the start node's are the negatives.
        for (int k = 0; k < 3; k++)
        {
            double xk = k == 0 ? X : k == 1 ? Y : Z, ckk = k == 0 ? cx : k == 1 ? cy : cz, pkk = k == 0 ? fx : k == 1 ? fy : fz;
            double dStrain = (ckk - (1 + 2 * strain) * xk) / l2;
            double dt = A * (E * dStrain / l0 - S * xk / l3); // ∂(A S / L0)/∂X_k
            double dHalf = half * A * xk / l0;
            int end = 3 * (5 + k), start = 3 * (2 + k);
            if (forces)
            {
                double dfx = dt * cx + (k == 0 ? t : 0), dfy = dt * cy + (k == 1 ? t : 0), dfz = dt * cz + (k == 2 ? t : 0);
                force[end] = dfx; force[end + 1] = dfy; force[end + 2] = dfz;
                force[start] = -dfx; force[start + 1] = -dfy; force[start + 2] = -dfz;
                weight[end] = dHalf * bar.Gx; weight[end + 1] = dHalf * bar.Gy; weight[end + 2] = dHalf * bar.Gz;
                weight[start] = -weight[end]; weight[start + 1] = -weight[end + 1]; weight[start + 2] = -weight[end + 2];
            }
            if (withMode)
            {
                double dq = E * A * (2 * cphi * pkk / l3 - 3 * xk * cphi * cphi / (l3 * l2)) + dt * ff;
                quadratic[5 + k] = dq; quadratic[2 + k] = -dq;
            }
        }
    }

    /// <summary>
    /// Gradient with respect to the end displacements of φᵀK_bar φ (elastic bar): for the end node
    /// (E A / L0³)[2(c·φd) φd + |φd|² c], the negative for the start node. Derived in docs/theory.md §13.
    /// </summary>
    public static (double X, double Y, double Z) QuadraticGradient(double cx, double cy, double cz, double fx, double fy, double fz, double stiffness)
    {
        double cphi = cx * fx + cy * fy + cz * fz, ff = fx * fx + fy * fy + fz * fz;
        return (stiffness * (2 * cphi * fx + ff * cx), stiffness * (2 * cphi * fy + ff * cy), stiffness * (2 * cphi * fz + ff * cz));
    }
}
