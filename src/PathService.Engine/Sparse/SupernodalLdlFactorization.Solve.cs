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
    [MethodImpl(MethodImplOptions.AggressiveOptimization)]
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
            else BackwardSupernode(s, x, y, t, t2, A.Columns1(0), A.Columns2(0));
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
    [MethodImpl(MethodImplOptions.AggressiveOptimization)]
    private void SolveTask(int task, int participant, double* x, double* y, bool backward)
    {
        var P = _solve;
        var A = _solveArrays;
        double* t = A.Temp1(participant), t2 = A.Temp2(participant);
        if (backward)
        {
            double* e1 = A.Columns1(participant), e2 = A.Columns2(participant);
            for (int s = P.SuperEnd[task] - 1; s >= P.SuperBegin[task]; s--) BackwardSupernode(s, x, y, t, t2, e1, e2);
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
            SolveKernels.LowerSolve(l, nf, xs, nc);
            if (nr == 0) return;
            new Span<double>(t, nr).Clear();
            SolveKernels.Gemv(l + nc, nf, xs, nc, t, nr);
            for (int r = 0; r < nr; r++)
            {
                int i = target[rp + r];
                if (i >= 0) x[i] += t[r];
                else b1[~i] += t[r];
            }
            return;
        }
        double* ys = y + f;
        SolveKernels.LowerSolve2(l, nf, xs, ys, nc);
        if (nr == 0) return;
        new Span<double>(t, nr).Clear();
        new Span<double>(t2, nr).Clear();
        SolveKernels.Gemv2(l + nc, nf, xs, ys, nc, t, t2, nr);
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
    [MethodImpl(MethodImplOptions.AggressiveOptimization)]
    private void ForwardShared(int s, double* x, double* y, double* t, double* t2)
    {
        var S = _s;
        int f = S.First[s], nc = S.First[s + 1] - f, nr = S.RowPtr[s + 1] - S.RowPtr[s], nf = nc + nr;
        double* l = _pl + S.LOffset[s];
        double* xs = x + f, ys = y == null ? null : y + f;
        if (y == null) SolveKernels.LowerSolve(l, nf, xs, nc);
        else SolveKernels.LowerSolve2(l, nf, xs, ys, nc);
        _blockWork.Start(s, l, nf, nc, nr, x, y, xs, ys, t, t2, backward: false);
        _team.Run(_blockWork, Threads);
    }

    /// <summary><see cref="BackwardSupernode"/> with the products of the rows below shared among the threads, column by column.</summary>
    [MethodImpl(MethodImplOptions.AggressiveOptimization)]
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
        BackSubstitute(l, nf, nc, xs, ys, _solveArrays.Columns1(0), _solveArrays.Columns2(0));
    }

    [MethodImpl(MethodImplOptions.AggressiveOptimization)]
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
    private void BackwardSupernode(int s, double* x, double* y, double* t, double* t2, double* e1, double* e2)
    {
        var S = _s;
        int[] rows = S.Rows;
        int f = S.First[s], nc = S.First[s + 1] - f, rp = S.RowPtr[s], nr = S.RowPtr[s + 1] - rp, nf = nc + nr;
        double* l = _pl + S.LOffset[s];
        double* xs = x + f;
        if (y == null)
        {
            for (int r = 0; r < nr; r++) t[r] = x[rows[rp + r]];
            SolveKernels.ColumnDots(l + nc, nf, nc, t, nr, e1);
        }
        else
        {
            for (int r = 0; r < nr; r++) { int i = rows[rp + r]; t[r] = x[i]; t2[r] = y[i]; }
            SolveKernels.ColumnDots2(l + nc, nf, nc, t, t2, nr, e1, e2);
        }
        BackSubstitute(l, nf, nc, xs, y == null ? null : y + f, e1, e2);
    }

    /// <summary>Back substitution on the pivot block of a supernode, given the products e = L₂₁ᵀt of the rows below.</summary>
    private static void BackSubstitute(double* l, int nf, int nc, double* xs, double* ys, double* e1, double* e2)
    {
        if (ys == null) SolveKernels.UpperSolve(l, nf, xs, nc, e1);
        else SolveKernels.UpperSolve2(l, nf, xs, ys, nc, e1, e2);
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

        [MethodImpl(MethodImplOptions.AggressiveOptimization)]
        private void Rows(int r0, int r1)
        {
            int len = r1 - r0;
            double* t = _t + r0, t2 = _t2 + r0;
            new Span<double>(t, len).Clear();
            if (_y != null) new Span<double>(t2, len).Clear();
            if (_y == null) SolveKernels.Gemv(_l + _nc + r0, _nf, _xs, _nc, t, len);
            else SolveKernels.Gemv2(_l + _nc + r0, _nf, _xs, _ys, _nc, t, t2, len);
            int[] rows = owner._s.Rows;
            int rp = owner._s.RowPtr[_s] + r0;
            for (int r = 0; r < len; r++)
            {
                int i = rows[rp + r];
                _x[i] += t[r];
                if (_y != null) _y[i] += t2[r];
            }
        }

        [MethodImpl(MethodImplOptions.AggressiveOptimization)]
        private void Columns(int j0, int j1)
        {
            // Results go to the calling thread's arrays, which BackSubstitute then reads.
            double* e1 = owner._solveArrays.Columns1(0), e2 = owner._solveArrays.Columns2(0);
            double* col = _l + (long)j0 * _nf + _nc;
            if (_y == null) SolveKernels.ColumnDots(col, _nf, j1 - j0, _t, _nr, e1 + j0);
            else SolveKernels.ColumnDots2(col, _nf, j1 - j0, _t, _t2, _nr, e1 + j0, e2 + j0);
        }
    }

    /// <summary>Pinned work arrays of the solves, allocated once: permuted vectors, task buffers, per-thread rows.</summary>
    private sealed class SolveArrays
    {
        private readonly double[] _x, _y, _b1, _b2, _temp, _e;
        private readonly int _rows, _columns;

        public SolveArrays(int n, int rows, int columns, int bufferLength, int threads)
        {
            _columns = columns;
            _e = GC.AllocateArray<double>(2 * columns * threads, pinned: true);
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
        public long Length => _x.Length + _y.Length + _b1.Length + _b2.Length + _temp.Length + _e.Length;

        public double* Temp1(int participant) => Pointer(_temp) + 2L * _rows * participant;
        public double* Temp2(int participant) => Pointer(_temp) + 2L * _rows * participant + _rows;
        public double* Columns1(int participant) => Pointer(_e) + 2L * _columns * participant;
        public double* Columns2(int participant) => Pointer(_e) + 2L * _columns * participant + _columns;

        private static double* Pointer(double[] a) => (double*)Unsafe.AsPointer(ref MemoryMarshal.GetArrayDataReference(a));
    }
}
