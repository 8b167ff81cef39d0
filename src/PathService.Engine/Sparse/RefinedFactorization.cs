// RefinedFactorization: a backward-error check on every solve with a pivot-free
// LDL^T, and fixed-precision iterative refinement when the check fails.
//
// Why: the supernodal LDL^T factorises without numerical pivoting (after a
// fill-reducing ordering), which is backward stable for positive definite
// tangents but has no such guarantee for indefinite ones, and the engine reads
// its verdicts (stable/unstable, critical points) from those factors. The check
// makes every solve prove its own accuracy.
//
// Method: after x = K^-1 b from the factor, the residual r = b - K x (one
// sparse product with the matrix that was factorised) gives the normwise
// backward error
//     omega = ||r||_inf / (||K||_inf ||x||_inf + ||b||_inf)
// (J. L. Rigal and J. Gaches, "On the compatibility of a given solution with
// the data of a linear system", J. ACM 14, 1967; N. J. Higham, "Accuracy and
// Stability of Numerical Algorithms", 2nd ed., SIAM 2002, Thm 7.1): x solves
// exactly a system whose matrix and right-hand side are perturbed by omega
// relative. When omega exceeds the bound, x += K^-1 r with the factor already
// in place (fixed-precision iterative refinement: R. D. Skeel, "Iterative
// refinement implies numerical stability for Gaussian elimination", Math.
// Comp. 35, 1980; Higham 2002, ch. 12), at most MaxSteps times, keeping the
// best iterate. Both columns of a two-column solve are checked by one fused
// pass over the matrix. ||K||_inf (a second pass) is computed only when omega
// estimated with max |K_ii| <= ||K||_inf in its place exceeds the bound.
//
// Bound 1e-12: a backward-stable solve gives omega of a few units of round-off
// (1.1e-16; measured up to 2e-16 on the bench roofs and 4e-15 on two demos, 5e-13
// only deep in the post-buckled range of the guyed mast, docs/validation.md), so
// the bound leaves three to four orders for growth in |L||D||L^T| before it
// acts, and it is one order below the tiny-pivot ratio 1e-11 at which the
// factorisation itself reports a pivot as vanishing: a solve it admits is the
// exact solve of a tangent perturbed far less than anything the pivot
// diagnosis or the Newton tolerance can see (common practice, no source, for
// the choice of the margin).
//
// Memory: the matrix copy and the work vectors are allocated in the
// constructor; Factorize and Solve allocate nothing.

using System.Runtime.CompilerServices;
using System.Runtime.Intrinsics;

namespace PathService.Engine.Sparse;

/// <summary>
/// Wraps a numeric LDLᵀ factorisation: keeps the matrix it factorised, checks the normwise backward error of every
/// solve and refines the solution when it exceeds <see cref="BackwardErrorBound"/>. Inertia and pivot diagnosis are
/// the inner factorisation's.
/// </summary>
public sealed class RefinedFactorization : ISymmetricFactorization
{
    /// <summary>Default bound on the normwise backward error of a solve (see the file header for the choice).</summary>
    public const double DefaultBound = 1e-12;

    /// <summary>Refinement steps allowed per right-hand side (fixed-precision refinement settles in one or two, Higham 2002 §12.1).</summary>
    public const int MaxSteps = 3;

    private readonly ISymmetricFactorization _inner;
    private readonly SymmetricPattern _pattern;
    private readonly double[] _matrix;
    private readonly double[] _b1, _b2, _r1, _r2, _d, _save, _pair;
    private double _matrixNorm = double.NaN, _diagonalMax = double.NaN;

    /// <param name="inner">The factorisation to check (its pattern is the one the values are aligned with).</param>
    /// <param name="backwardErrorBound">Refine when the backward error of a solve exceeds this (0 or less: refine always).</param>
    public RefinedFactorization(ISymmetricFactorization inner, double backwardErrorBound = DefaultBound)
    {
        _inner = inner ?? throw new ArgumentNullException(nameof(inner));
        if (!(backwardErrorBound < 1)) throw new ArgumentOutOfRangeException(nameof(backwardErrorBound), backwardErrorBound, "the bound must be below 1");
        BackwardErrorBound = backwardErrorBound;
        _pattern = inner.Symbolic.Pattern;
        int n = _pattern.Size;
        _matrix = new double[_pattern.NonZeroCount];
        _b1 = new double[n]; _b2 = new double[n]; _r1 = new double[n]; _r2 = new double[n]; _d = new double[n]; _save = new double[n]; _pair = new double[4 * n];
    }

    /// <summary>The factorisation being checked.</summary>
    public ISymmetricFactorization Inner => _inner;

    /// <summary>Backward error above which a solve is refined.</summary>
    public double BackwardErrorBound { get; }

    /// <summary>Right-hand sides whose solution was checked.</summary>
    public long CheckedSolves { get; private set; }

    /// <summary>Refinement steps taken in total (each one solve with the factor and one product with the matrix).</summary>
    public int RefinementSteps { get; private set; }

    /// <summary>Right-hand sides whose backward error stayed above the bound after refinement.</summary>
    public int UnresolvedSolves { get; private set; }

    // The backward errors below are as the check evaluates them: exact when above the bound; below it, possibly the
    // upper estimate with max |K_ii| in place of ‖K‖∞ (which spares the pass over the matrix for ‖K‖∞).

    /// <summary>Solves checked since the last factorisation.</summary>
    public int CheckedSinceFactorize { get; private set; }

    /// <summary>Whether a solve since the last factorisation exceeded the bound before refinement (the factor is then
    /// not trusted for unchecked solves either).</summary>
    public bool ExceededSinceFactorize { get; private set; }

    /// <summary>Largest backward error of a solve before refinement.</summary>
    public double LargestBackwardError { get; private set; }

    /// <summary>Largest backward error of a solve as returned (after refinement).</summary>
    public double LargestFinalBackwardError { get; private set; }

    /// <summary>Backward error of the last right-hand side solved (after refinement; of the second column for Solve2).</summary>
    public double LastBackwardError { get; private set; }

    public LdlSymbolic Symbolic => _inner.Symbolic;
    public LdlStatus Status => _inner.Status;
    public int NegativePivotCount => _inner.NegativePivotCount;
    public int TinyPivotIndex => _inner.TinyPivotIndex;
    public double SmallestPivotRatio => _inner.SmallestPivotRatio;

    public LdlStatus Factorize(ReadOnlySpan<double> values, double singularPivotRatio = 1e-11)
    {
        // The copy is what the solves are checked against, whatever the caller does with its array afterwards.
        values.CopyTo(_matrix);
        _matrixNorm = double.NaN;
        _diagonalMax = double.NaN;
        CheckedSinceFactorize = 0;
        ExceededSinceFactorize = false;
        return _inner.Factorize(values, singularPivotRatio);
    }

    public void Solve(Span<double> rhsInPlace)
    {
        if (!Checkable) { _inner.Solve(rhsInPlace); return; }
        rhsInPlace.CopyTo(_b1);
        _inner.Solve(rhsInPlace);
        Check(_b1, rhsInPlace);
    }

    public void Solve(ReadOnlySpan<double> b, Span<double> x)
    {
        if (!Checkable) { _inner.Solve(b, x); return; }
        b.CopyTo(_b1);
        _inner.Solve(_b1, x);
        Check(_b1, x);
    }

    public void Solve2(Span<double> rhs1InPlace, Span<double> rhs2InPlace)
    {
        if (!Checkable) { _inner.Solve2(rhs1InPlace, rhs2InPlace); return; }
        rhs1InPlace.CopyTo(_b1);
        rhs2InPlace.CopyTo(_b2);
        _inner.Solve2(rhs1InPlace, rhs2InPlace);
        Residual2(_b1, rhs1InPlace, _r1, _b2, rhs2InPlace, _r2);
        Finish(_b1, rhs1InPlace, _r1);
        Finish(_b2, rhs2InPlace, _r2);
    }

    /// <summary>Normwise backward error of x as a solution of K x = b, K the last factorised matrix.</summary>
    public double BackwardError(ReadOnlySpan<double> b, ReadOnlySpan<double> x)
    {
        var r = new double[b.Length];
        Residual(b, x, r);
        return Omega(b, x, r, exact: true);
    }

    /// <summary>A solve is checked only on a usable factor (a zero pivot leaves the solution meaningless anyway).</summary>
    private bool Checkable => _inner.Status != LdlStatus.ZeroPivot && _pattern.Size > 0;

    private void Check(double[] b, Span<double> x)
    {
        Residual(b, x, _r1);
        Finish(b, x, _r1);
    }

    /// <summary>Backward error of x from its residual r; refines while it exceeds the bound.</summary>
    private void Finish(double[] b, Span<double> x, double[] r)
    {
        CheckedSolves++;
        CheckedSinceFactorize++;
        double omega = Omega(b, x, r);
        if (!double.IsFinite(omega)) { LastBackwardError = omega; ExceededSinceFactorize = true; return; } // non-finite solutions are the caller's to reject
        if (omega > LargestBackwardError) LargestBackwardError = omega;
        if (omega > BackwardErrorBound) ExceededSinceFactorize = true;
        for (int step = 0; step < MaxSteps && omega > BackwardErrorBound; step++)
        {
            // x ← x + K⁻¹ r, kept only if it lowers the backward error (refinement cannot help a factor that is too unstable).
            x.CopyTo(_save);
            Array.Copy(r, _d, r.Length);
            _inner.Solve(_d);
            for (int i = 0; i < x.Length; i++) x[i] += _d[i];
            RefinementSteps++;
            Residual(b, x, r);
            double next = Omega(b, x, r);
            if (!(next < omega))
            {
                _save.AsSpan(0, x.Length).CopyTo(x);
                break;
            }
            omega = next;
        }
        if (omega > BackwardErrorBound) UnresolvedSolves++;
        if (omega > LargestFinalBackwardError) LargestFinalBackwardError = omega;
        LastBackwardError = omega;
    }

    // Optimised at first call: a trace is short, and these loops run a few hundred times.
    [MethodImpl(MethodImplOptions.AggressiveOptimization)]
    private double Omega(ReadOnlySpan<double> b, ReadOnlySpan<double> x, ReadOnlySpan<double> r, bool exact = false)
    {
        double rn = 0, xn = 0, bn = 0;
        for (int i = 0; i < r.Length; i++)
        {
            rn = Math.Max(rn, Math.Abs(r[i]));
            xn = Math.Max(xn, Math.Abs(x[i]));
            bn = Math.Max(bn, Math.Abs(b[i]));
        }
        if (!double.IsFinite(rn) || !double.IsFinite(xn)) return double.NaN;
        if (rn == 0) return 0.0;
        // ‖K‖∞ ≥ max |K_ii| (cheap, from the diagonal): if ω with that lower bound already meets the bound, the exact
        // ω (smaller) does too, and the full pass over the matrix for ‖K‖∞ is not needed.
        if (double.IsNaN(_diagonalMax)) _diagonalMax = DiagonalMax();
        double upper = rn / (_diagonalMax * xn + bn);
        if (upper <= BackwardErrorBound && !exact) return upper;
        if (double.IsNaN(_matrixNorm)) _matrixNorm = InfinityNorm();
        return rn / (_matrixNorm * xn + bn);
    }

    private double DiagonalMax()
    {
        var cp = _pattern.ColumnPointers;
        double m = 0;
        for (int j = 0; j < _pattern.Size; j++) m = Math.Max(m, Math.Abs(_matrix[cp[j + 1] - 1]));
        return m;
    }

    /// <summary>‖K‖∞ = max row sum of |K_ij| over the full symmetric matrix.</summary>
    // Optimised at first call: a trace is short, and these loops run a few hundred times.
    [MethodImpl(MethodImplOptions.AggressiveOptimization)]
    private double InfinityNorm()
    {
        var rows = _d; // scratch
        Array.Clear(rows);
        var cp = _pattern.ColumnPointers; var ri = _pattern.RowIndices;
        for (int j = 0; j < _pattern.Size; j++)
            for (int p = cp[j]; p < cp[j + 1]; p++)
            {
                int i = ri[p];
                double a = Math.Abs(_matrix[p]);
                rows[i] += a;
                if (i != j) rows[j] += a;
            }
        double m = 0;
        for (int i = 0; i < rows.Length; i++) m = Math.Max(m, rows[i]);
        return m;
    }

    /// <summary>r = b − K x over the upper compressed-column pattern (each off-diagonal entry used twice).</summary>
    // Optimised at first call: a trace is short, and these loops run a few hundred times.
    [MethodImpl(MethodImplOptions.AggressiveOptimization)]
    private unsafe void Residual(ReadOnlySpan<double> b, ReadOnlySpan<double> x, Span<double> r)
    {
        b.CopyTo(r);
        int n = _pattern.Size;
        fixed (int* cp = _pattern.ColumnPointers, ri = _pattern.RowIndices)
        fixed (double* a = _matrix, px = x, pr = r)
        {
            for (int j = 0; j < n; j++)
            {
                double xj = px[j], sj = 0;
                int end = cp[j + 1] - 1; // the diagonal is the last entry of every column
                for (int p = cp[j]; p < end; p++)
                {
                    int i = ri[p];
                    pr[i] -= a[p] * xj;
                    sj += a[p] * px[i];
                }
                pr[j] -= sj + a[end] * xj;
            }
        }
    }

    /// <summary>
    /// Both residuals in one pass over the matrix (the product is memory-bound): the two columns are interleaved so
    /// that each matrix entry is applied to both with one 2-wide vector operation.
    /// </summary>
    // Optimised at first call: a trace is short, and these loops run a few hundred times.
    [MethodImpl(MethodImplOptions.AggressiveOptimization)]
    private unsafe void Residual2(ReadOnlySpan<double> b1, ReadOnlySpan<double> x1, Span<double> r1,
        ReadOnlySpan<double> b2, ReadOnlySpan<double> x2, Span<double> r2)
    {
        int n = _pattern.Size;
        var xx = _pair.AsSpan(0, 2 * n);
        var rr = _pair.AsSpan(2 * n, 2 * n);
        for (int i = 0; i < n; i++)
        {
            xx[2 * i] = x1[i]; xx[2 * i + 1] = x2[i];
            rr[2 * i] = b1[i]; rr[2 * i + 1] = b2[i];
        }
        fixed (int* cp = _pattern.ColumnPointers, ri = _pattern.RowIndices)
        fixed (double* a = _matrix, px = xx, pr = rr)
        {
            for (int j = 0; j < n; j++)
            {
                var xj = Vector128.Load(px + 2 * j);
                var sj = Vector128<double>.Zero;
                int end = cp[j + 1] - 1;
                for (int p = cp[j]; p < end; p++)
                {
                    int i = ri[p];
                    var v = Vector128.Create(a[p]);
                    double* ri2 = pr + 2 * i;
                    Vector128.Store(Vector128.Load(ri2) - v * xj, ri2);
                    sj += v * Vector128.Load(px + 2 * i);
                }
                double* rj = pr + 2 * j;
                Vector128.Store(Vector128.Load(rj) - (sj + Vector128.Create(a[end]) * xj), rj);
            }
        }
        for (int i = 0; i < n; i++) { r1[i] = rr[2 * i]; r2[i] = rr[2 * i + 1]; }
    }
}
