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
            sys.Factor.Solve(x);
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
    public static (double[] Eigenvalues, double[][] Modes) ComputeBlock(EquilibriumSystem sys, int k, double[]? guess, int maxIterations = 30, double tolerance = 1e-10)
    {
        int n = sys.FreeCount;
        k = Math.Clamp(k, 1, n);
        var rng = new Random(4242);
        var x = new double[k][];
        for (int j = 0; j < k; j++)
        {
            x[j] = new double[n];
            for (int i = 0; i < n; i++) x[j][i] = rng.NextDouble() - 0.5;
            if (j == 0 && guess is not null && guess.Length == n)
            {
                double gn = Math.Sqrt(EquilibriumSystem.Dot(guess, guess));
                if (gn > 0) for (int i = 0; i < n; i++) x[0][i] = 0.25 * x[0][i] + guess[i] / gn;
            }
        }
        var kx = new double[k][];
        for (int j = 0; j < k; j++) kx[j] = new double[n];
        var values = new double[k];
        var previous = new double[k];
        for (int it = 0; it < maxIterations; it++)
        {
            for (int j = 0; j < k; j++) sys.Factor.Solve(x[j]);
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
            bool done = it > 1;
            for (int j = 0; j < k && done; j++)
                done = Math.Abs(values[j] - previous[j]) <= tolerance * Math.Max(Math.Abs(values[j]), 1e-300) + 1e-300;
            Array.Copy(values, previous, k);
            if (done) break;
        }
        return (values, x);
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
