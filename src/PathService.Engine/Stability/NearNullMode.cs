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

    private static bool Normalize(double[] x)
    {
        double s = Math.Sqrt(EquilibriumSystem.Dot(x, x));
        if (!(s > 0) || !double.IsFinite(s)) return false;
        for (int i = 0; i < x.Length; i++) x[i] /= s;
        return true;
    }
}
