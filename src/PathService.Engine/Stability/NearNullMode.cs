using PathService.Engine.Continuation;

namespace PathService.Engine.Stability;

/// <summary>
/// Inverse iteration with a zero shift on a factorised tangent: converges to the eigenpair of K whose eigenvalue is
/// nearest zero, the critical (near-null) mode near a critical point (e.g. B. N. Parlett, "The Symmetric Eigenvalue
/// Problem", SIAM 1998, ch. 4 (from memory)). The eigenvalue is the Rayleigh quotient xᵀKx / xᵀx, signed.
/// </summary>
internal static class NearNullMode
{
    public static (double Eigenvalue, double[] Mode) Compute(EquilibriumSystem sys, double[]? start, int maxIterations = 40, double tolerance = 1e-10, double absoluteTolerance = 0,
        bool mixStart = false)
    {
        int n = sys.FreeCount;
        var x = new double[n];
        bool guessed = start is not null && start.Length == n && EquilibriumSystem.Dot(start, start) > 0;
        if (!guessed || mixStart)
        {
            // Deterministic start with components in every direction. Mixed into a guess when asked: a guess from another
            // state can be orthogonal to the mode wanted here (a symmetric structure's modes fall in symmetry classes),
            // and inverse iteration never leaves the span it starts in, except by round-off.
            var rng = new Random(12345);
            for (int i = 0; i < n; i++) x[i] = rng.NextDouble() - 0.5;
            Normalize(x);
        }
        if (guessed)
        {
            var g = start!;
            double gn = Math.Sqrt(EquilibriumSystem.Dot(g, g));
            // Unequal weights: the mix cannot cancel (|g + r/2| >= 1/2 for unit g and r).
            for (int i = 0; i < n; i++) x[i] = (mixStart ? 0.5 * x[i] : 0) + g[i] / gn;
        }
        Normalize(x);
        var kx = new double[n];
        double mu = double.NaN;
        for (int k = 0; k < maxIterations; k++)
        {
            sys.EigenSolve(x);
            if (!Normalize(x)) break;
            sys.Assembler.Multiply(sys.Values, x, kx);
            double next = EquilibriumSystem.Dot(x, kx);
            bool done = k > 1 && Math.Abs(next - mu) <= tolerance * Math.Max(Math.Abs(next), 1e-300) + absoluteTolerance + 1e-300;
            mu = next;
            if (done) break;
        }
        return (double.IsFinite(mu) ? mu : 0.0, x);
    }

    /// <summary>
    /// The k eigenpairs of K nearest zero by block inverse iteration with Rayleigh-Ritz on the k-dimensional subspace
    /// (subspace iteration; Parlett 1998, ch. 14 (from memory)), for a bifurcation of multiplicity k. Eigenvalues in
    /// increasing |μ|; modes orthonormal. The first start vector is the guess (the single mode already found).
    /// </summary>
    /// <param name="absoluteTolerance">Added to the relative test: at a located critical point the eigenvalues wanted are
    /// themselves ~0, and a purely relative test on them would never pass.</param>
    public static (double[] Eigenvalues, double[][] Modes) ComputeBlock(EquilibriumSystem sys, int k, double[]? guess, int maxIterations = 30, double tolerance = 1e-10,
        double absoluteTolerance = 0)
    {
        var (values, modes, _) = ComputeBlock(sys, k, guess, null, maxIterations, tolerance, absoluteTolerance);
        return (values, modes);
    }

    /// <summary><see cref="ComputeBlock(EquilibriumSystem, int, double[], int, double, double)"/> from given start vectors
    /// (k of them, e.g. a subspace found to a looser tolerance), reporting whether the values met the tolerance.</summary>
    public static (double[] Eigenvalues, double[][] Modes, bool Converged) ComputeBlock(EquilibriumSystem sys, int k, double[]? guess, double[][]? starts,
        int maxIterations, double tolerance, double absoluteTolerance)
    {
        int n = sys.FreeCount;
        k = Math.Clamp(k, 1, n);
        var rng = new Random(4242);
        var x = new double[k][];
        for (int j = 0; j < k; j++)
        {
            x[j] = new double[n];
            if (starts is not null && j < starts.Length && starts[j].Length == n)
            {
                Array.Copy(starts[j], x[j], n);
                continue;
            }
            for (int i = 0; i < n; i++) x[j][i] = rng.NextDouble() - 0.5;
            if (j == 0 && guess is not null && guess.Length == n)
            {
                // A quarter of a unit random vector beside the unit guess (unscaled random entries would outweigh it by ~√n).
                double gn = Math.Sqrt(EquilibriumSystem.Dot(guess, guess));
                Normalize(x[0]);
                if (gn > 0 && double.IsFinite(gn)) for (int i = 0; i < n; i++) x[0][i] = 0.25 * x[0][i] + guess[i] / gn;
            }
        }
        bool converged = false;
        var kx = new double[k][];
        for (int j = 0; j < k; j++) kx[j] = new double[n];
        var values = new double[k];
        var previous = new double[k];
        for (int it = 0; it < maxIterations; it++)
        {
            for (int j = 0; j < k; j += 2)
                if (j + 1 < k) sys.EigenSolve2(x[j], x[j + 1]);
                else sys.EigenSolve(x[j]);
            Orthonormalize(x);
            // Rayleigh-Ritz: H = XᵀKX (k×k), rotate X to H's eigenvectors.
            for (int j = 0; j < k; j++) sys.Assembler.Multiply(sys.Values, x[j], kx[j]);
            var h = MathNet.Numerics.LinearAlgebra.Matrix<double>.Build.Dense(k, k);
            for (int a = 0; a < k; a++)
                for (int b = a; b < k; b++)
                {
                    double v = EquilibriumSystem.Dot(x[a], kx[b]);
                    h[a, b] = v; h[b, a] = v;
                }
            var evd = h.Evd(MathNet.Numerics.LinearAlgebra.Symmetricity.Symmetric);
            var order = Enumerable.Range(0, k).OrderBy(i => Math.Abs(evd.EigenValues[i].Real)).ToArray();
            var rotated = new double[k][];
            for (int j = 0; j < k; j++)
            {
                rotated[j] = new double[n];
                for (int a = 0; a < k; a++)
                {
                    double c = evd.EigenVectors[a, order[j]];
                    if (c == 0) continue;
                    for (int i = 0; i < n; i++) rotated[j][i] += c * x[a][i];
                }
                values[j] = evd.EigenValues[order[j]].Real;
            }
            x = rotated;
            // Two iterations suffice to compare: near a critical point the wanted eigenvalues are ~0 and the others are not,
            // so a random start vector's unwanted part shrinks by |μ_k/μ_k+1| per iteration and the Ritz values of the
            // first iteration are already close to converged.
            bool done = it > 0;
            for (int j = 0; j < k && done; j++)
                done = Math.Abs(values[j] - previous[j]) <= tolerance * Math.Max(Math.Abs(values[j]), 1e-300) + absoluteTolerance + 1e-300;
            Array.Copy(values, previous, k);
            if (done) { converged = true; break; }
        }
        return (values, x, converged);
    }

    /// <summary>
    /// The eigenpair of K nearest zero among the eigenvalues of one sign, by the Lanczos method on K⁻¹ with full
    /// reorthogonalisation (C. Lanczos 1950; Parlett 1998, ch. 13 (from memory)). The extreme eigenvalues of K⁻¹ are the
    /// reciprocals of K's eigenvalues nearest zero from either side, and Lanczos finds both ends of a spectrum first, so
    /// the negative eigenvalue nearest zero is found even where a positive soft mode lies nearer (plain inverse iteration
    /// would converge to that one). Stops when the wanted Ritz pair's residual ‖K⁻¹y − θy‖ = β_j|z_j| is below
    /// <paramref name="tolerance"/>·|θ|. The eigenvalue returned is the Rayleigh quotient yᵀKy of the unit Ritz vector.
    /// </summary>
    /// <param name="sign">−1 or +1: the sign wanted; 0: nearest zero of either sign.</param>
    /// <param name="basis">Work space of up to <paramref name="maxSteps"/> + 1 vectors, reused between calls.</param>
    /// <returns>Eigenvalue, mode, and false when no Ritz value of that sign exists in the Krylov space.</returns>
    /// <param name="toleranceFor">When given, the tolerance as a function of the current estimate of μ (replaces
    /// <paramref name="tolerance"/>): a caller far from a root needs fewer digits than one next to it.</param>
    public static (double Eigenvalue, double[] Mode, bool Found) NearestOfSign(EquilibriumSystem sys, int sign, double[]? start, List<double[]> basis,
        int maxSteps = 30, double tolerance = 1e-6, Func<double, double>? toleranceFor = null)
    {
        int n = sys.FreeCount;
        maxSteps = Math.Min(maxSteps, n);
        while (basis.Count < maxSteps + 1) basis.Add(new double[n]);
        var q0 = basis[0];
        // Start: the unit guess (the mode tracked so far) plus a deterministic vector of norm 0.1 with components in every
        // direction, so that the Krylov space is never confined to one symmetry class while a good guess still dominates
        // (a random vector of unscaled entries would outweigh the guess by ~√n and cost the Lanczos steps a good guess saves).
        var rng = new Random(12345);
        for (int i = 0; i < n; i++) q0[i] = rng.NextDouble() - 0.5;
        Normalize(q0);
        if (start is not null && start.Length == n)
        {
            double gn = Math.Sqrt(EquilibriumSystem.Dot(start, start));
            if (gn > 0 && double.IsFinite(gn)) for (int i = 0; i < n; i++) q0[i] = 0.1 * q0[i] + start[i] / gn;
        }
        Normalize(q0);
        var alpha = new double[maxSteps];
        var beta = new double[maxSteps];
        double[]? z = null;
        double theta = 0;
        int steps = 0;
        for (int j = 0; j < maxSteps; j++)
        {
            var w = basis[j + 1];
            sys.EigenSolve(basis[j], w);
            alpha[j] = EquilibriumSystem.Dot(basis[j], w);
            // Full reorthogonalisation against the basis, one classical Gram-Schmidt pass (enough for the few tens of steps
            // taken here; each pass costs ~4jn flops, at 30 steps more than a solve).
            for (int pass = 0; pass < 1; pass++)
                for (int i = 0; i <= j; i++)
                {
                    double c = EquilibriumSystem.Dot(basis[i], w);
                    var qi = basis[i];
                    for (int e = 0; e < n; e++) w[e] -= c * qi[e];
                }
            beta[j] = Math.Sqrt(EquilibriumSystem.Dot(w, w));
            steps = j + 1;
            // Ritz values of the tridiagonal T_j; the wanted one: of the given sign, largest |θ| (μ = 1/θ nearest zero).
            var t = MathNet.Numerics.LinearAlgebra.Matrix<double>.Build.Dense(steps, steps);
            for (int i = 0; i < steps; i++)
            {
                t[i, i] = alpha[i];
                if (i + 1 < steps) { t[i, i + 1] = beta[i]; t[i + 1, i] = beta[i]; }
            }
            var evd = t.Evd(MathNet.Numerics.LinearAlgebra.Symmetricity.Symmetric);
            int pick = -1;
            for (int i = 0; i < steps; i++)
            {
                double v = evd.EigenValues[i].Real;
                if (sign != 0 && Math.Sign(v) != sign) continue;
                if (pick < 0 || Math.Abs(v) > Math.Abs(evd.EigenValues[pick].Real)) pick = i;
            }
            if (pick >= 0)
            {
                theta = evd.EigenValues[pick].Real;
                z = new double[steps];
                for (int i = 0; i < steps; i++) z[i] = evd.EigenVectors[i, pick];
                double wanted = toleranceFor is null ? tolerance : toleranceFor(1.0 / theta);
                if (Math.Abs(beta[j] * z[steps - 1]) <= wanted * Math.Abs(theta)) break;
            }
            else z = null;
            if (!(beta[j] > 1e-14 * Math.Abs(alpha[j])) || !double.IsFinite(beta[j])) break; // invariant subspace found
            if (j + 1 < maxSteps) for (int e = 0; e < n; e++) w[e] /= beta[j];
        }
        if (z is null || theta == 0) return (0.0, q0, false);
        var y = new double[n];
        for (int i = 0; i < z.Length; i++)
        {
            double c = z[i];
            var qi = basis[i];
            for (int e = 0; e < n; e++) y[e] += c * qi[e];
        }
        if (!Normalize(y)) return (0.0, q0, false);
        var ky = new double[n];
        sys.Assembler.Multiply(sys.Values, y, ky);
        double mu = EquilibriumSystem.Dot(y, ky);
        return (double.IsFinite(mu) ? mu : 1.0 / theta, y, true);
    }

    /// <summary>Modified Gram-Schmidt, twice for orthogonality to rounding.</summary>
    private static void Orthonormalize(double[][] x)
    {
        for (int pass = 0; pass < 2; pass++)
            for (int j = 0; j < x.Length; j++)
            {
                for (int a = 0; a < j; a++)
                {
                    double c = EquilibriumSystem.Dot(x[a], x[j]);
                    for (int i = 0; i < x[j].Length; i++) x[j][i] -= c * x[a][i];
                }
                Normalize(x[j]);
            }
    }

    private static bool Normalize(double[] x)
    {
        double s = Math.Sqrt(EquilibriumSystem.Dot(x, x));
        if (!(s > 0) || !double.IsFinite(s)) return false;
        for (int i = 0; i < x.Length; i++) x[i] /= s;
        return true;
    }
}
