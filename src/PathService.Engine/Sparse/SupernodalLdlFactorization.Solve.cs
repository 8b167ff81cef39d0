// Triangular solves with the supernodal factor: L D L^T x = b, for one or two
// right-hand sides, shared among threads by the subtrees of a SolveSchedule.
//
// Order of work: gather b into the postorder, forward solve of the subtree
// tasks (in parallel; updates of top columns go to per-task buffers), add the
// buffers in task order, forward solve, diagonal and backward solve of the top
// (one thread), backward solve of the tasks (in parallel), scatter back. With
// two right-hand sides each column of L is read once for both vectors, with
// exactly the operations of two single solves (DenseKernels.Axpy2 and Dot2),
// so Solve2 gives bit for bit what two calls of Solve give.

using System.Runtime.CompilerServices;
using System.Runtime.InteropServices;

namespace PathService.Engine.Sparse;

public sealed unsafe partial class SupernodalLdlFactorization
{
    private readonly SolveSchedule _solve;
    private readonly SolveWork _solveWork;
    private readonly SolveArrays _solveArrays;
    private readonly BlockWork _blockWork;

    /// <summary>Entries below the pivot block from which a top supernode's solve is shared among the threads.</summary>
    private const long SharedBlockEntries = 16_384;

    /// <summary>Share of the factor's entries whose solves run in parallel subtree tasks.</summary>
    public double SolveParallelShare => _solve.ParallelShare;

    /// <summary>Subtree tasks of the solve schedule.</summary>
    public int SolveTaskCount => _solve.TaskCount;

    public void Solve(Span<double> rhsInPlace)
    {
        CheckSolve(rhsInPlace.Length, nameof(rhsInPlace));
        fixed (double* r1 = rhsInPlace) SolveCore(r1, null);
    }

    public void Solve(ReadOnlySpan<double> b, Span<double> x)
    {
        if (b.Length != _n) throw new ArgumentException($"Right-hand side must have length {_n}, got {b.Length}.", nameof(b));
        if (x.Length != _n) throw new ArgumentException($"Solution must have length {_n}, got {x.Length}.", nameof(x));
        b.CopyTo(x);
        Solve(x);
    }

    public void Solve2(Span<double> rhs1InPlace, Span<double> rhs2InPlace)
    {
        CheckSolve(rhs1InPlace.Length, nameof(rhs1InPlace));
        CheckSolve(rhs2InPlace.Length, nameof(rhs2InPlace));
        fixed (double* r1 = rhs1InPlace, r2 = rhs2InPlace) SolveCore(r1, r2);
    }

    private void CheckSolve(int length, string name)
    {
        if (!_factorized || Status == LdlStatus.ZeroPivot)
            throw new InvalidOperationException("No usable factorisation: call Factorize first and check that it did not report ZeroPivot.");
        if (length != _n)
            throw new ArgumentException($"Right-hand side must have length {_n}, got {length}.", name);
    }

    /// <summary>Solves in place for r1 and, when r2 is not null, r2 in the same passes over L.</summary>
    private void SolveCore(double* r1, double* r2)
    {
        var A = _solveArrays;
        var P = _solve;
        int[] perm = _s.Perm;
        double* x = A.X, y = r2 == null ? null : A.Y;
        for (int k = 0; k < _n; k++) x[k] = r1[perm[k]];
        if (y != null) for (int k = 0; k < _n; k++) y[k] = r2[perm[k]];

        if (P.TaskCount > 0)
        {
            _solveWork.Start(x, y, backward: false);
            _team.Run(_solveWork, Math.Min(Threads, P.TaskCount));
            // Top columns receive the tasks' updates in task order (fixed, whatever thread ran which task).
            int[] col = P.BufferColumn;
            for (int q = 0; q < col.Length; q++) x[col[q]] += A.Buffer1[q];
            if (y != null) for (int q = 0; q < col.Length; q++) y[col[q]] += A.Buffer2[q];
        }

        double* t = A.Temp1(0), t2 = A.Temp2(0);
        int[] rows = _s.Rows;
        foreach (int s in P.TopSupers)
        {
            if (SharesRows(s)) ForwardShared(s, x, y, t, t2);
            else ForwardSupernode(s, x, y, t, t2, rows, null, null);
        }
        foreach (int s in P.TopSupers) ScaleByPivots(s, x, y);
        for (int i = P.TopSupers.Length - 1; i >= 0; i--)
        {
            int s = P.TopSupers[i];
            if (SharesRows(s)) BackwardShared(s, x, y, t, t2);
            else BackwardSupernode(s, x, y, t, t2);
        }

        if (P.TaskCount > 0)
        {
            _solveWork.Start(x, y, backward: true);
            _team.Run(_solveWork, Math.Min(Threads, P.TaskCount));
        }

        for (int k = 0; k < _n; k++) r1[perm[k]] = x[k];
        if (y != null) for (int k = 0; k < _n; k++) r2[perm[k]] = y[k];
    }

    /// <summary>Forward solve, pivot scaling (forward pass) or backward solve (backward pass) of subtree task t.</summary>
    private void SolveTask(int task, int participant, double* x, double* y, bool backward)
    {
        var P = _solve;
        var A = _solveArrays;
        double* t = A.Temp1(participant), t2 = A.Temp2(participant);
        if (backward)
        {
            for (int s = P.SuperEnd[task] - 1; s >= P.SuperBegin[task]; s--) BackwardSupernode(s, x, y, t, t2);
            return;
        }
        int b0 = P.BufferPtr[task], bn = P.BufferPtr[task + 1] - b0;
        double* b1 = A.Buffer1 + b0, b2 = y == null ? null : A.Buffer2 + b0;
        new Span<double>(b1, bn).Clear();
        if (b2 != null) new Span<double>(b2, bn).Clear();
        for (int s = P.SuperBegin[task]; s < P.SuperEnd[task]; s++) ForwardSupernode(s, x, y, t, t2, P.Target, b1, b2);
        for (int s = P.SuperBegin[task]; s < P.SuperEnd[task]; s++) ScaleByPivots(s, x, y);
    }

    /// <summary>
    /// L z = w on supernode s: dense unit-lower solve on the pivot block, then the rows below, each added to x at
    /// target[q] (a column) or, when negative, to the task buffer at ~target[q].
    /// </summary>
    [MethodImpl(MethodImplOptions.AggressiveOptimization)]
    private void ForwardSupernode(int s, double* x, double* y, double* t, double* t2, int[] target, double* b1, double* b2)
    {
        var S = _s;
        int f = S.First[s], nc = S.First[s + 1] - f, rp = S.RowPtr[s], nr = S.RowPtr[s + 1] - rp, nf = nc + nr;
        double* l = _pl + S.LOffset[s];
        double* xs = x + f;
        if (y == null)
        {
            for (int j = 0; j < nc; j++) DenseKernels.Axpy(xs[j], l + (long)j * nf + j + 1, xs + j + 1, nc - j - 1);
            if (nr == 0) return;
            new Span<double>(t, nr).Clear();
            for (int j = 0; j < nc; j++) DenseKernels.Axpy(xs[j], l + (long)j * nf + nc, t, nr);
            for (int r = 0; r < nr; r++)
            {
                int i = target[rp + r];
                if (i >= 0) x[i] += t[r];
                else b1[~i] += t[r];
            }
            return;
        }
        double* ys = y + f;
        for (int j = 0; j < nc; j++)
            DenseKernels.Axpy2(xs[j], ys[j], l + (long)j * nf + j + 1, xs + j + 1, ys + j + 1, nc - j - 1);
        if (nr == 0) return;
        new Span<double>(t, nr).Clear();
        new Span<double>(t2, nr).Clear();
        for (int j = 0; j < nc; j++) DenseKernels.Axpy2(xs[j], ys[j], l + (long)j * nf + nc, t, t2, nr);
        for (int r = 0; r < nr; r++)
        {
            int i = target[rp + r];
            if (i >= 0) { x[i] += t[r]; y[i] += t2[r]; }
            else { b1[~i] += t[r]; b2[~i] += t2[r]; }
        }
    }

    /// <summary>Top supernodes whose block below the pivot rows is large enough to be shared among the threads.</summary>
    private bool SharesRows(int s) =>
        Threads > 1 && (long)(_s.First[s + 1] - _s.First[s]) * (_s.RowPtr[s + 1] - _s.RowPtr[s]) >= SharedBlockEntries;

    /// <summary>
    /// <see cref="ForwardSupernode"/> with the rows below the pivot block split among the threads: every entry gets the
    /// same operations in the same order as on one thread, so the result does not change.
    /// </summary>
    private void ForwardShared(int s, double* x, double* y, double* t, double* t2)
    {
        var S = _s;
        int f = S.First[s], nc = S.First[s + 1] - f, nr = S.RowPtr[s + 1] - S.RowPtr[s], nf = nc + nr;
        double* l = _pl + S.LOffset[s];
        double* xs = x + f, ys = y == null ? null : y + f;
        for (int j = 0; j < nc; j++)
        {
            if (y == null) DenseKernels.Axpy(xs[j], l + (long)j * nf + j + 1, xs + j + 1, nc - j - 1);
            else DenseKernels.Axpy2(xs[j], ys[j], l + (long)j * nf + j + 1, xs + j + 1, ys + j + 1, nc - j - 1);
        }
        _blockWork.Start(s, l, nf, nc, nr, x, y, xs, ys, t, t2, backward: false);
        _team.Run(_blockWork, Threads);
    }

    /// <summary><see cref="BackwardSupernode"/> with the products of the rows below shared among the threads, column by column.</summary>
    private void BackwardShared(int s, double* x, double* y, double* t, double* t2)
    {
        var S = _s;
        int[] rows = S.Rows;
        int f = S.First[s], nc = S.First[s + 1] - f, rp = S.RowPtr[s], nr = S.RowPtr[s + 1] - rp, nf = nc + nr;
        double* l = _pl + S.LOffset[s];
        double* xs = x + f, ys = y == null ? null : y + f;
        for (int r = 0; r < nr; r++) t[r] = x[rows[rp + r]];
        if (y != null) for (int r = 0; r < nr; r++) t2[r] = y[rows[rp + r]];
        _blockWork.Start(s, l, nf, nc, nr, x, y, xs, ys, t, t2, backward: true);
        _team.Run(_blockWork, Threads);
        double* e1 = _solveArrays.Column1, e2 = _solveArrays.Column2;
        for (int j = nc - 1; j >= 0; j--)
        {
            double* col = l + (long)j * nf;
            if (y == null)
            {
                xs[j] -= DenseKernels.Dot(col + j + 1, xs + j + 1, nc - j - 1) + e1[j];
                continue;
            }
            DenseKernels.Dot2(col + j + 1, xs + j + 1, ys + j + 1, nc - j - 1, out double dx, out double dy);
            xs[j] -= dx + e1[j];
            ys[j] -= dy + e2[j];
        }
    }

    private void ScaleByPivots(int s, double* x, double* y)
    {
        for (int k = _s.First[s]; k < _s.First[s + 1]; k++)
        {
            x[k] /= _pd[k];
            if (y != null) y[k] /= _pd[k];
        }
    }

    /// <summary>L^T v = u on supernode s: gather the rows below (all final by now), then dense back substitution.</summary>
    [MethodImpl(MethodImplOptions.AggressiveOptimization)]
    private void BackwardSupernode(int s, double* x, double* y, double* t, double* t2)
    {
        var S = _s;
        int[] rows = S.Rows;
        int f = S.First[s], nc = S.First[s + 1] - f, rp = S.RowPtr[s], nr = S.RowPtr[s + 1] - rp, nf = nc + nr;
        double* l = _pl + S.LOffset[s];
        double* xs = x + f;
        if (y == null)
        {
            for (int r = 0; r < nr; r++) t[r] = x[rows[rp + r]];
            for (int j = nc - 1; j >= 0; j--)
            {
                double* col = l + (long)j * nf;
                xs[j] -= DenseKernels.Dot(col + j + 1, xs + j + 1, nc - j - 1) + DenseKernels.Dot(col + nc, t, nr);
            }
            return;
        }
        double* ys = y + f;
        for (int r = 0; r < nr; r++) { int i = rows[rp + r]; t[r] = x[i]; t2[r] = y[i]; }
        for (int j = nc - 1; j >= 0; j--)
        {
            double* col = l + (long)j * nf;
            DenseKernels.Dot2(col + j + 1, xs + j + 1, ys + j + 1, nc - j - 1, out double dx, out double dy);
            DenseKernels.Dot2(col + nc, t, t2, nr, out double ex, out double ey);
            xs[j] -= dx + ex;
            ys[j] -= dy + ey;
        }
    }

    /// <summary>Team body: each participant takes the next subtree task until none is left.</summary>
    private sealed class SolveWork(SupernodalLdlFactorization owner) : ITeamWork
    {
        private double* _x, _y;
        private bool _backward;
        private int _next;

        public void Start(double* x, double* y, bool backward)
        {
            _x = x; _y = y; _backward = backward;
            _next = -1;
        }

        public void Execute(int participant)
        {
            int tasks = owner._solve.TaskCount;
            while (true)
            {
                int t = Interlocked.Increment(ref _next);
                if (t >= tasks) return;
                owner.SolveTask(t, participant, _x, _y, _backward);
            }
        }
    }

    /// <summary>
    /// Team body for one large supernode: forward, chunks of the rows below (product with the solved pivot block, then
    /// scattered to their columns); backward, chunks of columns (products of the gathered rows below).
    /// </summary>
    private sealed class BlockWork(SupernodalLdlFactorization owner) : ITeamWork
    {
        private const int RowChunk = 128, ColumnChunk = 8;
        private double* _l, _x, _y, _xs, _ys, _t, _t2;
        private int _s, _nf, _nc, _nr, _chunks, _next;
        private bool _backward;

        public void Start(int s, double* l, int nf, int nc, int nr, double* x, double* y, double* xs, double* ys, double* t, double* t2, bool backward)
        {
            _s = s; _l = l; _nf = nf; _nc = nc; _nr = nr; _x = x; _y = y; _xs = xs; _ys = ys; _t = t; _t2 = t2; _backward = backward;
            _chunks = backward ? (nc + ColumnChunk - 1) / ColumnChunk : (nr + RowChunk - 1) / RowChunk;
            _next = -1;
        }

        public void Execute(int participant)
        {
            while (true)
            {
                int q = Interlocked.Increment(ref _next);
                if (q >= _chunks) return;
                if (_backward) Columns(q * ColumnChunk, Math.Min(_nc, (q + 1) * ColumnChunk));
                else Rows(q * RowChunk, Math.Min(_nr, (q + 1) * RowChunk));
            }
        }

        private void Rows(int r0, int r1)
        {
            int len = r1 - r0;
            double* t = _t + r0, t2 = _t2 + r0;
            new Span<double>(t, len).Clear();
            if (_y != null) new Span<double>(t2, len).Clear();
            for (int j = 0; j < _nc; j++)
            {
                double* col = _l + (long)j * _nf + _nc + r0;
                if (_y == null) DenseKernels.Axpy(_xs[j], col, t, len);
                else DenseKernels.Axpy2(_xs[j], _ys[j], col, t, t2, len);
            }
            int[] rows = owner._s.Rows;
            int rp = owner._s.RowPtr[_s] + r0;
            for (int r = 0; r < len; r++)
            {
                int i = rows[rp + r];
                _x[i] += t[r];
                if (_y != null) _y[i] += t2[r];
            }
        }

        private void Columns(int j0, int j1)
        {
            double* e1 = owner._solveArrays.Column1, e2 = owner._solveArrays.Column2;
            for (int j = j0; j < j1; j++)
            {
                double* col = _l + (long)j * _nf + _nc;
                if (_y == null) e1[j] = DenseKernels.Dot(col, _t, _nr);
                else DenseKernels.Dot2(col, _t, _t2, _nr, out e1[j], out e2[j]);
            }
        }
    }

    /// <summary>Pinned work arrays of the solves, allocated once: permuted vectors, task buffers, per-thread rows.</summary>
    private sealed class SolveArrays
    {
        private readonly double[] _x, _y, _b1, _b2, _temp, _e;
        private readonly int _rows;

        public SolveArrays(int n, int rows, int columns, int bufferLength, int threads)
        {
            _e = GC.AllocateArray<double>(2 * columns, pinned: true);
            Column1 = Pointer(_e);
            Column2 = Column1 + columns;
            _rows = rows;
            _x = GC.AllocateArray<double>(n, pinned: true);
            _y = GC.AllocateArray<double>(n, pinned: true);
            _b1 = GC.AllocateArray<double>(Math.Max(1, bufferLength), pinned: true);
            _b2 = GC.AllocateArray<double>(Math.Max(1, bufferLength), pinned: true);
            _temp = GC.AllocateArray<double>(2 * rows * threads, pinned: true);
            X = Pointer(_x); Y = Pointer(_y); Buffer1 = Pointer(_b1); Buffer2 = Pointer(_b2);
        }

        public double* X { get; }
        public double* Y { get; }
        public double* Buffer1 { get; }
        public double* Buffer2 { get; }
        public double* Column1 { get; }
        public double* Column2 { get; }
        public long Length => _x.Length + _y.Length + _b1.Length + _b2.Length + _temp.Length + _e.Length;

        public double* Temp1(int participant) => Pointer(_temp) + 2L * _rows * participant;
        public double* Temp2(int participant) => Pointer(_temp) + 2L * _rows * participant + _rows;

        private static double* Pointer(double[] a) => (double*)Unsafe.AsPointer(ref MemoryMarshal.GetArrayDataReference(a));
    }
}
