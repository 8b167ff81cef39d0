// SupernodalLdlFactorization: numeric supernodal multifrontal LDL^T, C = L D L^T
// with C = P A P^T, no numerical pivoting.
//
// Method: the multifrontal method (Duff and Reid, ACM TOMS 9(3), 1983; Liu,
// "The multifrontal method for sparse matrix solution: theory and practice",
// SIAM Review 34(1), 1992) on the supernodes of SupernodalStructure. For each
// supernode, in postorder: the original entries of its columns are assembled
// into its dense factor block, the contribution blocks of its children are
// added (extend-add, children in ascending order), the pivot columns are
// factorised and the Schur complement of the front becomes its own
// contribution block (DenseKernels: blocked, register-tiled, vectorised).
// Parallelism: independent subtrees of the elimination tree run as tasks on a
// team of threads (largest first, dynamic queue); above them the supernodes run
// in order, each large panel update shared among the threads by column
// slivers. Every entry is computed by the same operations in the same order
// whichever thread computes it, so the factor is bit-identical for any thread
// count.
//
// Pivot diagnosis: after the numeric phase the pivots are examined in the
// elimination order of the LdlSymbolic (not the postorder used here), with the
// rules of LdlFactorization: the count of negative pivots up to the first zero
// or non-finite pivot, the first tiny pivot |d_k| <= ratio * scale_k (scale_k
// = |A_kk|, or max |A_ii| when A_kk = 0) reported by its original index, and
// the smallest ratio. Pivot k depends only on the columns of its subtree, so
// every pivot before the first zero one in that order is exact.
//
// Memory: the factor blocks, the pivot array, the contribution-block arenas,
// packing buffers and solve workspaces are allocated (pinned) in the
// constructor; Factorize and Solve allocate nothing.

using System.Runtime.CompilerServices;
using System.Runtime.InteropServices;

namespace PathService.Engine.Sparse;

/// <summary>
/// Supernodal multifrontal LDLᵀ on the ordering of an <see cref="LdlSymbolic"/>: vectorised dense kernels, parallel
/// over subtrees and inside large fronts, deterministic for any thread count; same diagnosis as
/// <see cref="LdlFactorization"/>.
/// </summary>
public sealed unsafe partial class SupernodalLdlFactorization : ISymmetricFactorization
{
    private const double ParallelPanelFlops = 4e6;

    private readonly SupernodalStructure _s;
    private readonly int _n;
    private readonly double[] _lx, _d, _arena;
    private readonly double[][] _packA, _packB;
    private readonly double* _pl, _pd, _parena;
    private readonly WorkerTeam _team;
    private readonly TaskWork _taskWork;
    private readonly SliverWork _sliverWork;
    private double* _values;
    private bool _factorized;

    /// <param name="symbolic">Ordering and elimination tree.</param>
    /// <param name="threads">Threads to use (default: the processor count); results do not depend on it.</param>
    public SupernodalLdlFactorization(LdlSymbolic symbolic, int threads = 0)
    {
        ArgumentNullException.ThrowIfNull(symbolic);
        Symbolic = symbolic;
        Threads = threads > 0 ? threads : Environment.ProcessorCount;
        _s = new SupernodalStructure(symbolic, 2 * Threads);
        _n = _s.N;
        _lx = GC.AllocateUninitializedArray<double>((int)_s.LOffset[_s.SupernodeCount], pinned: true);
        _d = GC.AllocateArray<double>(_n, pinned: true);
        _arena = GC.AllocateUninitializedArray<double>((int)Math.Max(1, _s.ArenaLength), pinned: true);
        _pl = (double*)Unsafe.AsPointer(ref MemoryMarshal.GetArrayDataReference(_lx));
        _pd = (double*)Unsafe.AsPointer(ref MemoryMarshal.GetArrayDataReference(_d));
        _parena = (double*)Unsafe.AsPointer(ref MemoryMarshal.GetArrayDataReference(_arena));
        int packLength = (_s.MaxFront + 2 * DenseKernels.MR) * DenseKernels.NB + 64;
        _packA = new double[Threads][];
        _packB = new double[Threads][];
        for (int t = 0; t < Threads; t++)
        {
            _packA[t] = GC.AllocateUninitializedArray<double>(packLength, pinned: true);
            _packB[t] = GC.AllocateUninitializedArray<double>(packLength, pinned: true);
        }
        _team = new WorkerTeam(Threads);
        _solve = new SolveSchedule(_s);
        _solveWork = new SolveWork(this);
        _solveArrays = new SolveArrays(_n, _s.MaxRows + 1, _s.MaxFront + 1, _solve.BufferColumn.Length, Threads);
        _blockWork = new BlockWork(this);
        _taskWork = new TaskWork(this);
        _sliverWork = new SliverWork();
        Status = LdlStatus.ZeroPivot;
        TinyPivotIndex = -1;
    }

    public LdlSymbolic Symbolic { get; }

    /// <summary>Threads used by Factorize.</summary>
    public int Threads { get; }

    public LdlStatus Status { get; private set; }
    public int NegativePivotCount { get; private set; }
    public int TinyPivotIndex { get; private set; }
    public double SmallestPivotRatio { get; private set; }

    /// <summary>Number of supernodes after relaxed amalgamation.</summary>
    public int SupernodeCount => _s.SupernodeCount;

    /// <summary>Entries stored in the dense factor blocks (explicit zeros and the unused upper parts of pivot blocks included).</summary>
    public long StoredEntryCount => _s.LOffset[_s.SupernodeCount];

    /// <summary>Flops of one factorisation as performed (explicit zeros of the amalgamated supernodes included).</summary>
    public double PerformedFlopCount => _s.TotalFlops;

    /// <summary>Independent subtree tasks of the schedule, and supernodes above them.</summary>
    public int TaskCount => _s.TaskPtr.Length - 1;
    public int TopSupernodeCount => _s.TopSupers.Length;

    /// <summary>Wall time of the subtree-task phase and of the top-of-tree phase in the last Factorize.</summary>
    public TimeSpan LastSubtreePhase { get; private set; }
    public TimeSpan LastTopPhase { get; private set; }

    /// <summary>Flops of the subtree tasks (largest first) and of the top supernodes.</summary>
    public double[] TaskFlops()
    {
        var r = new double[TaskCount + 1];
        for (int t = 0; t < TaskCount; t++)
            for (int i = _s.TaskPtr[t]; i < _s.TaskPtr[t + 1]; i++) r[t] += _s.SupernodeFlops[_s.TaskSupers[i]];
        foreach (int s in _s.TopSupers) r[TaskCount] += _s.SupernodeFlops[s];
        return r;
    }

    /// <summary>Flops-weighted histogram of pivot-block widths: [1-3],[4-7],[8-15],[16-31],[32-63],[64+].</summary>
    public double[] WidthHistogram()
    {
        var h = new double[6];
        for (int s = 0; s < _s.SupernodeCount; s++)
        {
            int nc = _s.First[s + 1] - _s.First[s];
            int b = nc < 4 ? 0 : nc < 8 ? 1 : nc < 16 ? 2 : nc < 32 ? 3 : nc < 64 ? 4 : 5;
            h[b] += _s.SupernodeFlops[s] / _s.TotalFlops;
        }
        return h;
    }

    /// <summary>Largest front (pivot columns plus rows below).</summary>
    public int MaxFrontSize => _s.MaxFront;

    /// <summary>Bytes held by this factorisation's arrays.</summary>
    public long MemoryBytes => 8L * (_lx.Length + _d.Length + _arena.Length + _solveArrays.Length + 2L * _packA[0].Length * Threads);

    public LdlStatus Factorize(ReadOnlySpan<double> values, double singularPivotRatio = 1e-11)
    {
        if (values.Length != Symbolic.Pattern.NonZeroCount)
            throw new ArgumentException($"Expected {Symbolic.Pattern.NonZeroCount} values aligned with the pattern, got {values.Length}.", nameof(values));
        fixed (double* pv = values)
        {
            _values = pv;
            try
            {
                long t0 = System.Diagnostics.Stopwatch.GetTimestamp();
                _taskWork.Reset();
                _team.Run(_taskWork, Math.Min(Threads, _s.TaskPtr.Length - 1));
                long t1 = System.Diagnostics.Stopwatch.GetTimestamp();
                foreach (int s in _s.TopSupers) ProcessSupernode(s, 0, Threads > 1);
                LastSubtreePhase = System.Diagnostics.Stopwatch.GetElapsedTime(t0, t1);
                LastTopPhase = System.Diagnostics.Stopwatch.GetElapsedTime(t1);
            }
            finally
            {
                _values = null;
            }
            Diagnose(values, singularPivotRatio);
        }
        _factorized = true;
        return Status;
    }

    [MethodImpl(MethodImplOptions.AggressiveOptimization)]
    private void Diagnose(ReadOnlySpan<double> values, double singularPivotRatio)
    {
        int[] refPerm = Symbolic.Permutation, mine = _s.MineOfReference, diag = _s.DiagonalSlot;
        double maxDiagonal = 0;
        for (int k = 0; k < _n; k++) maxDiagonal = Math.Max(maxDiagonal, Math.Abs(values[diag[k]]));
        Status = LdlStatus.Success;
        NegativePivotCount = 0;
        TinyPivotIndex = -1;
        SmallestPivotRatio = double.PositiveInfinity;
        for (int k = 0; k < _n; k++)
        {
            int orig = refPerm[k];
            double d = _d[mine[k]];
            double akk = Math.Abs(values[diag[orig]]);
            double scale = akk != 0 ? akk : maxDiagonal;
            if (d == 0 || !double.IsFinite(d))
            {
                Status = LdlStatus.ZeroPivot;
                if (TinyPivotIndex < 0) TinyPivotIndex = orig;
                SmallestPivotRatio = 0;
                return;
            }
            double ratio = scale > 0 ? Math.Abs(d) / scale : double.PositiveInfinity;
            if (ratio < SmallestPivotRatio) SmallestPivotRatio = ratio;
            if (Math.Abs(d) <= singularPivotRatio * scale)
            {
                Status = LdlStatus.TinyPivot;
                if (TinyPivotIndex < 0) TinyPivotIndex = orig;
            }
            if (d < 0) NegativePivotCount++;
        }
    }

    /// <summary>Assembles, extend-adds and partially factorises the front of supernode s.</summary>
    [MethodImpl(MethodImplOptions.AggressiveOptimization)]
    private void ProcessSupernode(int s, int participant, bool shareLargePanels)
    {
        var S = _s;
        int f = S.First[s], nc = S.First[s + 1] - f, nr = S.RowPtr[s + 1] - S.RowPtr[s], nf = nc + nr;
        double* l = _pl + S.LOffset[s];
        double* u = _parena + S.ScratchOffset[s];
        new Span<double>(l, nf * nc).Clear();
        if (nr > 0) new Span<double>(u, nr * nr).Clear();

        // Original entries.
        double* v = _values;
        int[] dst = S.AsmDst, src = S.AsmSrc;
        for (int q = S.AsmPtr[s]; q < S.AsmPtr[s + 1]; q++) _pl[dst[q]] += v[src[q]];

        // Children's contribution blocks, in ascending order.
        fixed (int* relAll = S.Rel)
        {
            for (int cq = S.ChildPtr[s]; cq < S.ChildPtr[s + 1]; cq++)
            {
                int c = S.Children[cq];
                int nrc = S.RowPtr[c + 1] - S.RowPtr[c];
                int* rel = relAll + S.RowPtr[c];
                double* uc = _parena + S.UOffset[c];
                for (int jj = 0; jj < nrc; jj++)
                {
                    int pj = rel[jj];
                    double* col = pj < nc ? l + (long)pj * nf : u + (long)(pj - nc) * nr - nc;
                    double* from = uc + (long)jj * nrc;
                    for (int ii = jj; ii < nrc; ii++) col[rel[ii]] += from[ii];
                }
            }
        }

        // Partial LDL^T of the front, one panel at a time.
        double* d = _pd + f;
        fixed (double* packA = _packA[participant], packB = _packB[participant])
        {
            for (int c0 = 0; c0 < nc; c0 += DenseKernels.NB)
            {
                int w = Math.Min(DenseKernels.NB, nc - c0);
                // Inside the panel: narrow column groups, each followed by a tiled update of the rest of the panel.
                for (int ci = c0; ci < c0 + w; ci += DenseKernels.IB)
                {
                    int wi = Math.Min(DenseKernels.IB, c0 + w - ci);
                    DenseKernels.FactorPanel(l, nf, ci, wi, d);
                    int ri = ci + wi;
                    if (ri >= c0 + w) continue;
                    int inner = DenseKernels.Pack(l, nf, nc, ci, wi, ri, c0 + w, d, packA, packB);
                    for (int q = 0; q < inner; q++) DenseKernels.UpdateSliver(q, l, u, nf, nc, wi, ri, c0 + w, packA, packB);
                }
                int r0 = c0 + w;
                if (r0 >= nf) continue;
                int slivers = DenseKernels.Pack(l, nf, nc, c0, w, r0, nf, d, packA, packB);
                if (shareLargePanels && DenseKernels.UpdateFlops(nf, r0, w) > ParallelPanelFlops)
                {
                    _sliverWork.Set(l, u, nf, nc, w, r0, packA, packB, slivers);
                    _team.Run(_sliverWork, Threads);
                }
                else
                {
                    for (int q = 0; q < slivers; q++) DenseKernels.UpdateSliver(q, l, u, nf, nc, w, r0, nf, packA, packB);
                }
            }
        }

        // Move the contribution block down over the consumed children.
        long target = S.UOffset[s], from0 = S.ScratchOffset[s];
        if (nr > 0 && target != from0)
            Buffer.MemoryCopy(_parena + from0, _parena + target, 8L * nr * nr, 8L * nr * nr);
    }

    private sealed class TaskWork(SupernodalLdlFactorization owner) : ITeamWork
    {
        private int _next;
        public void Reset() => _next = -1;

        public void Execute(int participant)
        {
            var S = owner._s;
            int tasks = S.TaskPtr.Length - 1;
            while (true)
            {
                int t = Interlocked.Increment(ref _next);
                if (t >= tasks) return;
                for (int i = S.TaskPtr[t]; i < S.TaskPtr[t + 1]; i++) owner.ProcessSupernode(S.TaskSupers[i], participant, false);
            }
        }
    }

    private sealed class SliverWork : ITeamWork
    {
        private double* _l, _u, _packA, _packB;
        private int _nf, _nc, _w, _r0, _slivers, _next;

        public void Set(double* l, double* u, int nf, int nc, int w, int r0, double* packA, double* packB, int slivers)
        {
            _l = l; _u = u; _nf = nf; _nc = nc; _w = w; _r0 = r0; _packA = packA; _packB = packB; _slivers = slivers;
            _next = -1;
        }

        public void Execute(int participant)
        {
            while (true)
            {
                int q = Interlocked.Increment(ref _next);
                if (q >= _slivers) return;
                DenseKernels.UpdateSliver(q, _l, _u, _nf, _nc, _w, _r0, _nf, _packA, _packB);
            }
        }
    }
}
