// SolveKernels: dense kernels of the supernodal triangular solves, four factor
// columns at a time.
//
// Why: the factor of a mid-size model fits the last-level cache, so a solve is
// bound by instructions and latency, not by memory bandwidth. Column-at-a-time
// axpy loads and stores the target once per column, and a single-accumulator
// dot product waits on the latency of each fused multiply-add. Here the
// target stays in registers over four columns (forward) and four columns'
// dot products run as independent chains (backward).
//
// Determinism: every output gets exactly the operations, in the same order,
// of the column-at-a-time kernels in DenseKernels (Axpy: one fused
// multiply-add per column, columns in increasing order; Dot: four vector lanes
// from zero, tail into lane 0, then (s0 + s1) + (s2 + s3)). The two-vector
// variants give, for each vector, what the one-vector variant gives.

using System.Runtime.CompilerServices;
using System.Runtime.Intrinsics;
using System.Runtime.Intrinsics.X86;

namespace PathService.Engine.Sparse;

internal static unsafe class SolveKernels
{
    private static bool UseVectors => DenseKernels.UseVectors;

    [MethodImpl(MethodImplOptions.AggressiveInlining)]
    private static Vector256<double> VNmadd(Vector256<double> a, Vector256<double> b, Vector256<double> c) =>
        DenseKernels.UseFma ? Fma.MultiplyAddNegated(a, b, c) : Avx.Subtract(c, Avx.Multiply(a, b));

    [MethodImpl(MethodImplOptions.AggressiveInlining)]
    private static Vector256<double> VMadd(Vector256<double> a, Vector256<double> b, Vector256<double> acc) =>
        DenseKernels.UseFma ? Fma.MultiplyAdd(a, b, acc) : Avx.Add(acc, Avx.Multiply(a, b));

    /// <summary>
    /// y[0..len) -= Σ_j x[j]·a[j·ld + 0..len) for j = 0 .. cols-1 in increasing order (a column-major, leading
    /// dimension ld): <paramref name="cols"/> calls of <see cref="DenseKernels.Axpy"/>, bit for bit.
    /// </summary>
    [MethodImpl(MethodImplOptions.AggressiveOptimization)]
    public static void Gemv(double* a, long ld, double* x, int cols, double* y, int len)
    {
        int j = 0;
        if (UseVectors)
        {
            for (; j + 4 <= cols; j += 4)
            {
                double* a0 = a + j * ld, a1 = a0 + ld, a2 = a1 + ld, a3 = a2 + ld;
                var x0 = Vector256.Create(x[j]); var x1 = Vector256.Create(x[j + 1]);
                var x2 = Vector256.Create(x[j + 2]); var x3 = Vector256.Create(x[j + 3]);
                int i = 0;
                for (; i + 4 <= len; i += 4)
                {
                    var v = Avx.LoadVector256(y + i);
                    v = VNmadd(x0, Avx.LoadVector256(a0 + i), v);
                    v = VNmadd(x1, Avx.LoadVector256(a1 + i), v);
                    v = VNmadd(x2, Avx.LoadVector256(a2 + i), v);
                    v = VNmadd(x3, Avx.LoadVector256(a3 + i), v);
                    Avx.Store(y + i, v);
                }
                for (; i < len; i++)
                {
                    double v = y[i];
                    v = DenseKernels.Nmadd(x[j], a0[i], v);
                    v = DenseKernels.Nmadd(x[j + 1], a1[i], v);
                    v = DenseKernels.Nmadd(x[j + 2], a2[i], v);
                    v = DenseKernels.Nmadd(x[j + 3], a3[i], v);
                    y[i] = v;
                }
            }
        }
        for (; j < cols; j++) DenseKernels.Axpy(x[j], a + j * ld, y, len);
    }

    /// <summary><see cref="Gemv"/> for two vectors sharing the matrix: y1 -= A x1 and y2 -= A x2 in one pass over A.</summary>
    [MethodImpl(MethodImplOptions.AggressiveOptimization)]
    public static void Gemv2(double* a, long ld, double* x1, double* x2, int cols, double* y1, double* y2, int len)
    {
        int j = 0;
        if (UseVectors)
        {
            for (; j + 4 <= cols; j += 4)
            {
                double* a0 = a + j * ld, a1 = a0 + ld, a2 = a1 + ld, a3 = a2 + ld;
                var p0 = Vector256.Create(x1[j]); var p1 = Vector256.Create(x1[j + 1]);
                var p2 = Vector256.Create(x1[j + 2]); var p3 = Vector256.Create(x1[j + 3]);
                var q0 = Vector256.Create(x2[j]); var q1 = Vector256.Create(x2[j + 1]);
                var q2 = Vector256.Create(x2[j + 2]); var q3 = Vector256.Create(x2[j + 3]);
                int i = 0;
                for (; i + 4 <= len; i += 4)
                {
                    var c0 = Avx.LoadVector256(a0 + i); var c1 = Avx.LoadVector256(a1 + i);
                    var c2 = Avx.LoadVector256(a2 + i); var c3 = Avx.LoadVector256(a3 + i);
                    var v = Avx.LoadVector256(y1 + i);
                    var w = Avx.LoadVector256(y2 + i);
                    v = VNmadd(p0, c0, v); w = VNmadd(q0, c0, w);
                    v = VNmadd(p1, c1, v); w = VNmadd(q1, c1, w);
                    v = VNmadd(p2, c2, v); w = VNmadd(q2, c2, w);
                    v = VNmadd(p3, c3, v); w = VNmadd(q3, c3, w);
                    Avx.Store(y1 + i, v);
                    Avx.Store(y2 + i, w);
                }
                for (; i < len; i++)
                {
                    double v = y1[i], w = y2[i];
                    v = DenseKernels.Nmadd(x1[j], a0[i], v); w = DenseKernels.Nmadd(x2[j], a0[i], w);
                    v = DenseKernels.Nmadd(x1[j + 1], a1[i], v); w = DenseKernels.Nmadd(x2[j + 1], a1[i], w);
                    v = DenseKernels.Nmadd(x1[j + 2], a2[i], v); w = DenseKernels.Nmadd(x2[j + 2], a2[i], w);
                    v = DenseKernels.Nmadd(x1[j + 3], a3[i], v); w = DenseKernels.Nmadd(x2[j + 3], a3[i], w);
                    y1[i] = v; y2[i] = w;
                }
            }
        }
        for (; j < cols; j++) DenseKernels.Axpy2(x1[j], x2[j], a + j * ld, y1, y2, len);
    }

    /// <summary>
    /// Unit lower triangular solve in place, x[0..n) := L⁻¹x with L the n×n block at a (leading dimension ld, unit
    /// diagonal not stored): the same operations per entry as one <see cref="DenseKernels.Axpy"/> per column.
    /// </summary>
    [MethodImpl(MethodImplOptions.AggressiveOptimization)]
    public static void LowerSolve(double* a, long ld, double* x, int n)
    {
        for (int j0 = 0; j0 < n; j0 += 4)
        {
            int w = Math.Min(4, n - j0);
            // Inside the group of four columns, one column at a time (fewer than four entries each: the scalar path of
            // Axpy); below it, the four columns together.
            for (int j = j0; j < j0 + w; j++)
                for (int i = j + 1; i < j0 + w; i++) x[i] = DenseKernels.Nmadd(x[j], a[j * ld + i], x[i]);
            Gemv(a + j0 * ld + j0 + w, ld, x + j0, w, x + j0 + w, n - j0 - w);
        }
    }

    /// <summary><see cref="LowerSolve"/> for two vectors in one pass over the block.</summary>
    [MethodImpl(MethodImplOptions.AggressiveOptimization)]
    public static void LowerSolve2(double* a, long ld, double* x, double* y, int n)
    {
        for (int j0 = 0; j0 < n; j0 += 4)
        {
            int w = Math.Min(4, n - j0);
            for (int j = j0; j < j0 + w; j++)
                for (int i = j + 1; i < j0 + w; i++)
                {
                    x[i] = DenseKernels.Nmadd(x[j], a[j * ld + i], x[i]);
                    y[i] = DenseKernels.Nmadd(y[j], a[j * ld + i], y[i]);
                }
            Gemv2(a + j0 * ld + j0 + w, ld, x + j0, y + j0, w, x + j0 + w, y + j0 + w, n - j0 - w);
        }
    }

    /// <summary>e[j] = (column j of A)·t for j = 0 .. cols-1, each exactly as <see cref="DenseKernels.Dot"/> computes it.</summary>
    [MethodImpl(MethodImplOptions.AggressiveOptimization)]
    public static void ColumnDots(double* a, long ld, int cols, double* t, int len, double* e)
    {
        int j = 0;
        if (UseVectors)
        {
            for (; j + 4 <= cols; j += 4)
            {
                double* a0 = a + j * ld, a1 = a0 + ld, a2 = a1 + ld, a3 = a2 + ld;
                var s0 = Vector256<double>.Zero; var s1 = Vector256<double>.Zero;
                var s2 = Vector256<double>.Zero; var s3 = Vector256<double>.Zero;
                int i = 0;
                for (; i + 4 <= len; i += 4)
                {
                    var tv = Avx.LoadVector256(t + i);
                    s0 = VMadd(Avx.LoadVector256(a0 + i), tv, s0);
                    s1 = VMadd(Avx.LoadVector256(a1 + i), tv, s1);
                    s2 = VMadd(Avx.LoadVector256(a2 + i), tv, s2);
                    s3 = VMadd(Avx.LoadVector256(a3 + i), tv, s3);
                }
                e[j] = Finish(s0, a0, t, i, len);
                e[j + 1] = Finish(s1, a1, t, i, len);
                e[j + 2] = Finish(s2, a2, t, i, len);
                e[j + 3] = Finish(s3, a3, t, i, len);
            }
        }
        for (; j < cols; j++) e[j] = DenseKernels.Dot(a + j * ld, t, len);
    }

    /// <summary><see cref="ColumnDots"/> for two vectors in one pass over the columns.</summary>
    [MethodImpl(MethodImplOptions.AggressiveOptimization)]
    public static void ColumnDots2(double* a, long ld, int cols, double* t1, double* t2, int len, double* e1, double* e2)
    {
        int j = 0;
        if (UseVectors)
        {
            for (; j + 4 <= cols; j += 4)
            {
                double* a0 = a + j * ld, a1 = a0 + ld, a2 = a1 + ld, a3 = a2 + ld;
                var s0 = Vector256<double>.Zero; var s1 = Vector256<double>.Zero;
                var s2 = Vector256<double>.Zero; var s3 = Vector256<double>.Zero;
                var r0 = Vector256<double>.Zero; var r1 = Vector256<double>.Zero;
                var r2 = Vector256<double>.Zero; var r3 = Vector256<double>.Zero;
                int i = 0;
                for (; i + 4 <= len; i += 4)
                {
                    var u = Avx.LoadVector256(t1 + i);
                    var v = Avx.LoadVector256(t2 + i);
                    var c0 = Avx.LoadVector256(a0 + i); var c1 = Avx.LoadVector256(a1 + i);
                    var c2 = Avx.LoadVector256(a2 + i); var c3 = Avx.LoadVector256(a3 + i);
                    s0 = VMadd(c0, u, s0); r0 = VMadd(c0, v, r0);
                    s1 = VMadd(c1, u, s1); r1 = VMadd(c1, v, r1);
                    s2 = VMadd(c2, u, s2); r2 = VMadd(c2, v, r2);
                    s3 = VMadd(c3, u, s3); r3 = VMadd(c3, v, r3);
                }
                e1[j] = Finish(s0, a0, t1, i, len); e2[j] = Finish(r0, a0, t2, i, len);
                e1[j + 1] = Finish(s1, a1, t1, i, len); e2[j + 1] = Finish(r1, a1, t2, i, len);
                e1[j + 2] = Finish(s2, a2, t1, i, len); e2[j + 2] = Finish(r2, a2, t2, i, len);
                e1[j + 3] = Finish(s3, a3, t1, i, len); e2[j + 3] = Finish(r3, a3, t2, i, len);
            }
        }
        for (; j < cols; j++) DenseKernels.Dot2(a + j * ld, t1, t2, len, out e1[j], out e2[j]);
    }

    /// <summary>
    /// Back substitution on the pivot block (n×n at a, leading dimension ld) given e = L₂₁ᵀt of the rows below:
    /// x_j -= L[j+1.., j]·x[j+1..] + e_j for j from n−1 down to 0.
    /// </summary>
    [MethodImpl(MethodImplOptions.AggressiveOptimization)]
    public static void UpperSolve(double* a, long ld, double* x, int n, double* e)
    {
        for (int j = n - 1; j >= 0; j--) x[j] -= DenseKernels.Dot(a + j * ld + j + 1, x + j + 1, n - j - 1) + e[j];
    }

    /// <summary><see cref="UpperSolve"/> for two vectors in one pass over the block.</summary>
    [MethodImpl(MethodImplOptions.AggressiveOptimization)]
    public static void UpperSolve2(double* a, long ld, double* x, double* y, int n, double* e1, double* e2)
    {
        for (int j = n - 1; j >= 0; j--)
        {
            DenseKernels.Dot2(a + j * ld + j + 1, x + j + 1, y + j + 1, n - j - 1, out double dx, out double dy);
            x[j] -= dx + e1[j];
            y[j] -= dy + e2[j];
        }
    }

    /// <summary>The end of <see cref="DenseKernels.Dot"/>: lanes out, scalar tail into lane 0, pairwise sum.</summary>
    [MethodImpl(MethodImplOptions.AggressiveInlining)]
    private static double Finish(Vector256<double> acc, double* x, double* y, int i, int len)
    {
        double s0 = acc.GetElement(0), s1 = acc.GetElement(1), s2 = acc.GetElement(2), s3 = acc.GetElement(3);
        for (; i < len; i++) s0 = DenseKernels.Madd(x[i], y[i], s0);
        return (s0 + s1) + (s2 + s3);
    }
}
