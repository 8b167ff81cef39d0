// DenseKernels: the dense block operations of the supernodal LDL^T factorisation.
//
// Method: blocked right-looking LDL^T of a frontal matrix (the partial
// factorisation of the multifrontal method). Each panel of nb pivot columns is
// factorised column by column (left-looking inside the panel), then the rest of
// the front is updated by C -= L_panel * (L_panel D_panel)^T, computed by a
// register-tiled kernel on packed operands in the manner of Goto and van de
// Geijn, "Anatomy of high-performance matrix multiplication", ACM TOMS 34(3),
// 2008: the panel rows are packed in slivers of MR rows, the scaled columns in
// slivers of NR columns, and an MR x NR tile of accumulators stays in vector
// registers over the whole panel depth.
//
// Determinism: every entry of C is updated as c - sum_k a_k b_k with the sum
// accumulated from zero in increasing k by fused multiply-adds, whatever tile,
// thread or code path (vector or scalar tail) computes it. Results therefore do
// not depend on how tiles are shared among threads. Without hardware FMA every
// path uses a separate multiply and add instead (same rule, other rounding).
//
// Storage: column-major; the pivot block of the front ("L block", nf x nc,
// leading dimension nf) and the contribution block ("U block", nr x nr,
// leading dimension nr, rows and columns offset by nc) are separate arrays.
// Only lower triangles are meaningful; diagonal tiles may write junk above the
// diagonal, which is never read.

using System.Runtime.CompilerServices;
using System.Runtime.Intrinsics;
using System.Runtime.Intrinsics.X86;

namespace PathService.Engine.Sparse;

internal static unsafe class DenseKernels
{
    /// <summary>Columns per register tile.</summary>
    public const int NR = 4;
    /// <summary>Panel width (pivot columns per blocked step).</summary>
    public const int NB = 64;
    /// <summary>Inner panel width: columns factorised by vector updates before the rest of the panel is updated by tiles.</summary>
    public const int IB = 16;

    public static readonly bool UseFma = Fma.IsSupported;
    public static readonly bool UseV512 = Avx512F.IsSupported && Vector512.IsHardwareAccelerated;
    public static readonly bool UseVectors = Avx.IsSupported && Vector256.IsHardwareAccelerated;

    /// <summary>Rows per register tile: two 512-bit vectors where AVX-512 is accelerated, else two 256-bit vectors.</summary>
    public static readonly int MR = UseV512 ? 16 : 8;

    /// <summary>c - a*b with the same rounding as the vector paths.</summary>
    [MethodImpl(MethodImplOptions.AggressiveInlining)]
    public static double Nmadd(double a, double b, double c) => UseFma ? Math.FusedMultiplyAdd(-a, b, c) : c - a * b;

    /// <summary>acc + a*b with the same rounding as the vector paths.</summary>
    [MethodImpl(MethodImplOptions.AggressiveInlining)]
    public static double Madd(double a, double b, double acc) => UseFma ? Math.FusedMultiplyAdd(a, b, acc) : acc + a * b;

    [MethodImpl(MethodImplOptions.AggressiveInlining)]
    private static Vector256<double> VMadd(Vector256<double> a, Vector256<double> b, Vector256<double> acc) =>
        UseFma ? Fma.MultiplyAdd(a, b, acc) : Avx.Add(acc, Avx.Multiply(a, b));

    [MethodImpl(MethodImplOptions.AggressiveInlining)]
    private static Vector256<double> VNmadd(Vector256<double> a, Vector256<double> b, Vector256<double> c) =>
        UseFma ? Fma.MultiplyAddNegated(a, b, c) : Avx.Subtract(c, Avx.Multiply(a, b));

    /// <summary>y[0..len) -= t * x[0..len).</summary>
    // Inlined: the solves call these on short columns, where a call costs as much as the work.
    [MethodImpl(MethodImplOptions.AggressiveInlining)]
    public static void Axpy(double t, double* x, double* y, int len)
    {
        int i = 0;
        if (UseVectors)
        {
            var vt = Vector256.Create(t);
            for (; i + 4 <= len; i += 4)
                Avx.Store(y + i, VNmadd(vt, Avx.LoadVector256(x + i), Avx.LoadVector256(y + i)));
        }
        for (; i < len; i++) y[i] = Nmadd(t, x[i], y[i]);
    }

    /// <summary>
    /// y1 -= t1·x and y2 -= t2·x in one pass over x (the two right-hand sides of a solve share the factor's column);
    /// every element gets exactly the operations of two <see cref="Axpy"/> calls, so results are bit-identical.
    /// </summary>
    // Inlined: the solves call these on short columns, where a call costs as much as the work.
    [MethodImpl(MethodImplOptions.AggressiveInlining)]
    public static void Axpy2(double t1, double t2, double* x, double* y1, double* y2, int len)
    {
        int i = 0;
        if (UseVectors)
        {
            var v1 = Vector256.Create(t1);
            var v2 = Vector256.Create(t2);
            for (; i + 4 <= len; i += 4)
            {
                var xv = Avx.LoadVector256(x + i);
                Avx.Store(y1 + i, VNmadd(v1, xv, Avx.LoadVector256(y1 + i)));
                Avx.Store(y2 + i, VNmadd(v2, xv, Avx.LoadVector256(y2 + i)));
            }
        }
        for (; i < len; i++) { y1[i] = Nmadd(t1, x[i], y1[i]); y2[i] = Nmadd(t2, x[i], y2[i]); }
    }

    /// <summary>x·y1 and x·y2 in one pass over x, each accumulated exactly as <see cref="Dot"/> does.</summary>
    // Inlined: the solves call these on short columns, where a call costs as much as the work.
    [MethodImpl(MethodImplOptions.AggressiveInlining)]
    public static void Dot2(double* x, double* y1, double* y2, int len, out double d1, out double d2)
    {
        int i = 0;
        double a0 = 0, a1 = 0, a2 = 0, a3 = 0, b0 = 0, b1 = 0, b2 = 0, b3 = 0;
        if (UseVectors)
        {
            var acc1 = Vector256<double>.Zero;
            var acc2 = Vector256<double>.Zero;
            for (; i + 4 <= len; i += 4)
            {
                var xv = Avx.LoadVector256(x + i);
                acc1 = VMadd(xv, Avx.LoadVector256(y1 + i), acc1);
                acc2 = VMadd(xv, Avx.LoadVector256(y2 + i), acc2);
            }
            a0 = acc1.GetElement(0); a1 = acc1.GetElement(1); a2 = acc1.GetElement(2); a3 = acc1.GetElement(3);
            b0 = acc2.GetElement(0); b1 = acc2.GetElement(1); b2 = acc2.GetElement(2); b3 = acc2.GetElement(3);
        }
        else
        {
            for (; i + 4 <= len; i += 4)
            {
                a0 = Madd(x[i], y1[i], a0); a1 = Madd(x[i + 1], y1[i + 1], a1); a2 = Madd(x[i + 2], y1[i + 2], a2); a3 = Madd(x[i + 3], y1[i + 3], a3);
                b0 = Madd(x[i], y2[i], b0); b1 = Madd(x[i + 1], y2[i + 1], b1); b2 = Madd(x[i + 2], y2[i + 2], b2); b3 = Madd(x[i + 3], y2[i + 3], b3);
            }
        }
        for (; i < len; i++) { a0 = Madd(x[i], y1[i], a0); b0 = Madd(x[i], y2[i], b0); }
        d1 = (a0 + a1) + (a2 + a3);
        d2 = (b0 + b1) + (b2 + b3);
    }

    /// <summary>sum_i x[i] y[i], accumulated in 4 lanes (vector width) then added lane 0..3; the same on every path.</summary>
    // Inlined: the solves call these on short columns, where a call costs as much as the work.
    [MethodImpl(MethodImplOptions.AggressiveInlining)]
    public static double Dot(double* x, double* y, int len)
    {
        int i = 0;
        double s0 = 0, s1 = 0, s2 = 0, s3 = 0;
        if (UseVectors)
        {
            var acc = Vector256<double>.Zero;
            for (; i + 4 <= len; i += 4) acc = VMadd(Avx.LoadVector256(x + i), Avx.LoadVector256(y + i), acc);
            s0 = acc.GetElement(0); s1 = acc.GetElement(1); s2 = acc.GetElement(2); s3 = acc.GetElement(3);
        }
        else
        {
            for (; i + 4 <= len; i += 4)
            {
                s0 = Madd(x[i], y[i], s0); s1 = Madd(x[i + 1], y[i + 1], s1);
                s2 = Madd(x[i + 2], y[i + 2], s2); s3 = Madd(x[i + 3], y[i + 3], s3);
            }
        }
        for (; i < len; i++) s0 = Madd(x[i], y[i], s0);
        return (s0 + s1) + (s2 + s3);
    }

    /// <summary>y[0..len) /= d.</summary>
    [MethodImpl(MethodImplOptions.AggressiveOptimization)]
    public static void Scale(double* y, int len, double d)
    {
        int i = 0;
        if (UseVectors)
        {
            var vd = Vector256.Create(d);
            for (; i + 4 <= len; i += 4) Avx.Store(y + i, Avx.Divide(Avx.LoadVector256(y + i), vd));
        }
        for (; i < len; i++) y[i] /= d;
    }

    /// <summary>
    /// Factorises pivot columns [c0, c0+w) of the L block (nf rows, leading dimension nf), left-looking inside the panel:
    /// column j -= sum_{c0&lt;=k&lt;j} L(:,k) d_k L(j,k), then d_j = L(j,j) and L(j+1:,j) /= d_j.
    /// </summary>
    [MethodImpl(MethodImplOptions.AggressiveOptimization)]
    public static void FactorPanel(double* l, int nf, int c0, int w, double* d)
    {
        for (int j = c0; j < c0 + w; j++)
        {
            double* cj = l + (long)j * nf;
            for (int k = c0; k < j; k++)
            {
                double* ck = l + (long)k * nf;
                double t = ck[j] * d[k];
                Axpy(t, ck + j, cj + j, nf - j);
            }
            double dj = cj[j];
            d[j] = dj;
            Scale(cj + j + 1, nf - j - 1, dj);
        }
    }

    /// <summary>
    /// Packs rows [r0, nf) of panel columns [c0, c0+w) into MR-row slivers (k-major inside a sliver), padding with zeros;
    /// and the scaled columns W(j, k) = L(j, k) d_k for j in [r0, nf) into NR-column slivers, starting new slivers at
    /// r0 and at nc so that no sliver straddles the L block / U block boundary. Returns the number of column slivers.
    /// </summary>
    [MethodImpl(MethodImplOptions.AggressiveOptimization)]
    public static int Pack(double* l, int nf, int nc, int c0, int w, int r0, int colEnd, double* d, double* packA, double* packB)
    {
        int rows = nf - r0;
        int slivers = (rows + MR - 1) / MR;
        for (int p = 0; p < slivers; p++)
        {
            double* dst = packA + (long)p * w * MR;
            int i0 = r0 + p * MR, cnt = Math.Min(MR, nf - i0);
            for (int k = 0; k < w; k++)
            {
                double* src = l + (long)(c0 + k) * nf + i0;
                double* o = dst + k * MR;
                int r = 0;
                for (; r < cnt; r++) o[r] = src[r];
                for (; r < MR; r++) o[r] = 0;
            }
        }
        int count = 0;
        for (int range = 0; range < 2; range++)
        {
            int start = range == 0 ? r0 : Math.Max(r0, nc), end = range == 0 ? Math.Max(r0, Math.Min(nc, colEnd)) : colEnd;
            for (int j0 = start; j0 < end; j0 += NR)
            {
                double* dst = packB + (long)count * w * NR;
                int cnt = Math.Min(NR, end - j0);
                for (int k = 0; k < w; k++)
                {
                    double* src = l + (long)(c0 + k) * nf;
                    double dk = d[c0 + k];
                    double* o = dst + k * NR;
                    int c = 0;
                    for (; c < cnt; c++) o[c] = src[j0 + c] * dk;
                    for (; c < NR; c++) o[c] = 0;
                }
                count++;
            }
        }
        return count;
    }

    /// <summary>First front column of column sliver q (as laid out by <see cref="Pack"/>).</summary>
    [MethodImpl(MethodImplOptions.AggressiveInlining)]
    public static int SliverColumn(int q, int r0, int nc, int colEnd)
    {
        int e = Math.Min(nc, colEnd);
        int firstRange = e > r0 ? (e - r0 + NR - 1) / NR : 0;
        return q < firstRange ? r0 + q * NR : Math.Max(r0, nc) + (q - firstRange) * NR;
    }

    /// <summary>
    /// Updates the columns of column sliver q: C(i, j) -= sum_k A(i, k) W(j, k) for rows i in [j0, nf), j in the
    /// sliver's columns; C(i, j) is in the L block for j &lt; nc and in the U block otherwise.
    /// </summary>
    [MethodImpl(MethodImplOptions.AggressiveOptimization)]
    public static void UpdateSliver(int q, double* l, double* u, int nf, int nc, int w, int r0, int colEnd, double* packA, double* packB)
    {
        int nr = nf - nc;
        int j0 = SliverColumn(q, r0, nc, colEnd);
        int jEnd = j0 < nc ? Math.Min(j0 + NR, Math.Min(nc, colEnd)) : Math.Min(j0 + NR, colEnd);
        int cols = jEnd - j0;
        double* b = packB + (long)q * w * NR;
        double** colPtr = stackalloc double*[NR];
        for (int c = 0; c < NR; c++)
        {
            int j = j0 + Math.Min(c, cols - 1);
            colPtr[c] = j < nc ? l + (long)j * nf : u + (long)(j - nc) * nr - nc;
        }
        int firstSliver = (j0 - r0) / MR;
        int slivers = (nf - r0 + MR - 1) / MR;
        double* acc = stackalloc double[16 * NR];
        for (int p = firstSliver; p < slivers; p++)
        {
            int i0 = r0 + p * MR;
            double* a = packA + (long)p * w * MR;
            bool full = i0 >= j0 && i0 + MR <= nf && cols == NR;
            if (UseV512)
            {
                var c00 = Vector512<double>.Zero; var c01 = Vector512<double>.Zero; var c02 = Vector512<double>.Zero; var c03 = Vector512<double>.Zero;
                var c10 = Vector512<double>.Zero; var c11 = Vector512<double>.Zero; var c12 = Vector512<double>.Zero; var c13 = Vector512<double>.Zero;
                double* ap = a, bp = b;
                for (int k = 0; k < w; k++, ap += 16, bp += NR)
                {
                    var a0 = Vector512.Load(ap);
                    var a1 = Vector512.Load(ap + 8);
                    var b0 = Vector512.Create(bp[0]);
                    c00 = Avx512F.FusedMultiplyAdd(a0, b0, c00); c10 = Avx512F.FusedMultiplyAdd(a1, b0, c10);
                    var b1 = Vector512.Create(bp[1]);
                    c01 = Avx512F.FusedMultiplyAdd(a0, b1, c01); c11 = Avx512F.FusedMultiplyAdd(a1, b1, c11);
                    var b2 = Vector512.Create(bp[2]);
                    c02 = Avx512F.FusedMultiplyAdd(a0, b2, c02); c12 = Avx512F.FusedMultiplyAdd(a1, b2, c12);
                    var b3 = Vector512.Create(bp[3]);
                    c03 = Avx512F.FusedMultiplyAdd(a0, b3, c03); c13 = Avx512F.FusedMultiplyAdd(a1, b3, c13);
                }
                if (full)
                {
                    double* t0 = colPtr[0] + i0, t1 = colPtr[1] + i0, t2 = colPtr[2] + i0, t3 = colPtr[3] + i0;
                    (Vector512.Load(t0) - c00).Store(t0); (Vector512.Load(t0 + 8) - c10).Store(t0 + 8);
                    (Vector512.Load(t1) - c01).Store(t1); (Vector512.Load(t1 + 8) - c11).Store(t1 + 8);
                    (Vector512.Load(t2) - c02).Store(t2); (Vector512.Load(t2 + 8) - c12).Store(t2 + 8);
                    (Vector512.Load(t3) - c03).Store(t3); (Vector512.Load(t3 + 8) - c13).Store(t3 + 8);
                    continue;
                }
                c00.Store(acc); c10.Store(acc + 8);
                c01.Store(acc + 16); c11.Store(acc + 24);
                c02.Store(acc + 32); c12.Store(acc + 40);
                c03.Store(acc + 48); c13.Store(acc + 56);
            }
            else if (UseVectors)
            {
                var c00 = Vector256<double>.Zero; var c01 = Vector256<double>.Zero; var c02 = Vector256<double>.Zero; var c03 = Vector256<double>.Zero;
                var c10 = Vector256<double>.Zero; var c11 = Vector256<double>.Zero; var c12 = Vector256<double>.Zero; var c13 = Vector256<double>.Zero;
                double* ap = a, bp = b;
                for (int k = 0; k < w; k++, ap += MR, bp += NR)
                {
                    var a0 = Avx.LoadVector256(ap);
                    var a1 = Avx.LoadVector256(ap + 4);
                    var b0 = Vector256.Create(bp[0]);
                    c00 = VMadd(a0, b0, c00); c10 = VMadd(a1, b0, c10);
                    var b1 = Vector256.Create(bp[1]);
                    c01 = VMadd(a0, b1, c01); c11 = VMadd(a1, b1, c11);
                    var b2 = Vector256.Create(bp[2]);
                    c02 = VMadd(a0, b2, c02); c12 = VMadd(a1, b2, c12);
                    var b3 = Vector256.Create(bp[3]);
                    c03 = VMadd(a0, b3, c03); c13 = VMadd(a1, b3, c13);
                }
                if (full)
                {
                    double* t0 = colPtr[0] + i0, t1 = colPtr[1] + i0, t2 = colPtr[2] + i0, t3 = colPtr[3] + i0;
                    Avx.Store(t0, Avx.Subtract(Avx.LoadVector256(t0), c00)); Avx.Store(t0 + 4, Avx.Subtract(Avx.LoadVector256(t0 + 4), c10));
                    Avx.Store(t1, Avx.Subtract(Avx.LoadVector256(t1), c01)); Avx.Store(t1 + 4, Avx.Subtract(Avx.LoadVector256(t1 + 4), c11));
                    Avx.Store(t2, Avx.Subtract(Avx.LoadVector256(t2), c02)); Avx.Store(t2 + 4, Avx.Subtract(Avx.LoadVector256(t2 + 4), c12));
                    Avx.Store(t3, Avx.Subtract(Avx.LoadVector256(t3), c03)); Avx.Store(t3 + 4, Avx.Subtract(Avx.LoadVector256(t3 + 4), c13));
                    continue;
                }
                Avx.Store(acc, c00); Avx.Store(acc + 4, c10);
                Avx.Store(acc + 8, c01); Avx.Store(acc + 12, c11);
                Avx.Store(acc + 16, c02); Avx.Store(acc + 20, c12);
                Avx.Store(acc + 24, c03); Avx.Store(acc + 28, c13);
            }
            else
            {
                for (int t = 0; t < MR * NR; t++) acc[t] = 0;
                double* ap = a, bp = b;
                for (int k = 0; k < w; k++, ap += MR, bp += NR)
                    for (int c = 0; c < NR; c++)
                    {
                        double bc = bp[c];
                        for (int r = 0; r < MR; r++) acc[c * MR + r] = Madd(ap[r], bc, acc[c * MR + r]);
                    }
            }
            // Partial tile: rows at or below the sliver's first column and inside the front only.
            int rStart = Math.Max(0, j0 - i0), rEnd = Math.Min(MR, nf - i0);
            for (int c = 0; c < cols; c++)
            {
                double* t = colPtr[c] + i0;
                for (int r = rStart; r < rEnd; r++) t[r] -= acc[c * MR + r];
            }
        }
    }

    /// <summary>Flops of UpdateSliver for sliver q (for deciding whether to share a panel update among threads).</summary>
    public static double UpdateFlops(int nf, int r0, int w) => (double)(nf - r0) * (nf - r0) * w;
}
