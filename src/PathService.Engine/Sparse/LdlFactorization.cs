// LdlFactorization: numeric phase of the sparse LDL^T factorisation C = L D L^T,
// C = P A P^T, on a structure fixed by LdlSymbolic.
//
// Method: up-looking factorisation (T. A. Davis, "Algorithm 849: A concise
// sparse Cholesky factorization package", ACM TOMS 31(4), 2005). Row k of L
// solves L(0:k-1,0:k-1) D y = C(0:k-1,k) sparsely: its pattern is the reach of
// column k of C in the elimination tree, visited in topological order; then
// L(k,i) = y_i / d_i and d_k = c_kk - sum_i L(k,i) y_i.
//
// Data structure: L unit lower triangular in compressed columns (Lp, Li, Lx)
// with capacities from the column counts, D the diagonal; the row indices of
// each column are appended in increasing order as rows are computed.
//
// Takes: values aligned with the pattern's slots. Returns: status, inertia
// (negative pivots), first tiny/zero pivot in original numbering, the smallest
// pivot ratio, and solutions of A x = b.
// Limits: no numerical pivoting (meant for symmetric matrices that are definite
// or quasi-definite enough to factor in a fixed order); a zero or non-finite
// pivot stops the factorisation. All workspaces are allocated in the
// constructor; Factorize and Solve allocate nothing.

namespace PathService.Engine.Sparse;

/// <summary>
/// Numeric phase: refactorises new values on the fixed symbolic structure; workspaces allocated once in
/// the constructor; Factorize and Solve allocate nothing.
/// </summary>
public sealed class LdlFactorization
{
    private readonly int n;
    private readonly int[] perm, parent, cp, ci, cs;
    private readonly int[] Lp, Li, Lnz;
    private readonly double[] Lx, D;
    private readonly double[] y, work;
    private readonly int[] flag, reach;
    private bool factorized;

    public LdlFactorization(LdlSymbolic symbolic)
    {
        ArgumentNullException.ThrowIfNull(symbolic);
        if (symbolic.FactorNonZeroCount > Array.MaxLength)
            throw new ArgumentException(
                $"The factor would hold {symbolic.FactorNonZeroCount} entries, more than one array can store.", nameof(symbolic));
        Symbolic = symbolic;
        n = symbolic.Pattern.Size;
        perm = symbolic.Permutation;
        parent = symbolic.Parent;
        cp = symbolic.Upper.Cp;
        ci = symbolic.Upper.Ci;
        cs = symbolic.Upper.Cs;

        // Column starts of L from the column counts.
        Lp = new int[n + 1];
        for (int k = 0; k < n; k++) Lp[k + 1] = Lp[k] + symbolic.ColumnCounts[k];
        Li = new int[Lp[n]];
        Lx = new double[Lp[n]];
        Lnz = new int[n];
        D = new double[n];
        y = new double[n];
        work = new double[n];
        flag = new int[n];
        reach = new int[n];
        Status = LdlStatus.ZeroPivot;
        TinyPivotIndex = -1;
    }

    public LdlSymbolic Symbolic { get; }

    /// <summary>Outcome of the last Factorize (ZeroPivot before the first call).</summary>
    public LdlStatus Status { get; private set; }

    /// <summary>Number of negative d_k: the number of negative eigenvalues of A (Sylvester's law of inertia).</summary>
    public int NegativePivotCount { get; private set; }

    /// <summary>Original (unpermuted) index of the first tiny or zero pivot, -1 if none.</summary>
    public int TinyPivotIndex { get; private set; }

    /// <summary>min over k of |d_k| / scale_k.</summary>
    public double SmallestPivotRatio { get; private set; }

    /// <summary>
    /// Factorises values aligned with Symbolic.Pattern (length NonZeroCount). No numerical pivoting.
    /// A pivot with |d_k| &lt;= singularPivotRatio * scale_k (scale_k = |A_kk|, or max_i |A_ii| if A_kk = 0)
    /// gives TinyPivot (factor still usable); a zero or non-finite pivot gives ZeroPivot (factor unusable).
    /// </summary>
    public LdlStatus Factorize(ReadOnlySpan<double> values, double singularPivotRatio = 1e-11)
    {
        // Locals let the JIT keep the arrays in registers in the loops below.
        int[] cp = this.cp, ci = this.ci, cs = this.cs, parent = this.parent, perm = this.perm;
        int[] Lp = this.Lp, Li = this.Li, Lnz = this.Lnz, flag = this.flag, reach = this.reach;
        double[] Lx = this.Lx, D = this.D, y = this.y;
        int n = this.n;

        if (values.Length != cs.Length)
            throw new ArgumentException($"Expected {cs.Length} values aligned with the pattern, got {values.Length}.", nameof(values));

        // Fallback scale: max_i |A_ii| over the diagonal (last entry of each column of C).
        double maxDiagonal = 0;
        for (int k = 0; k < n; k++)
            maxDiagonal = Math.Max(maxDiagonal, Math.Abs(values[cs[cp[k + 1] - 1]]));

        factorized = true;
        Status = LdlStatus.Success;
        NegativePivotCount = 0;
        TinyPivotIndex = -1;
        SmallestPivotRatio = double.PositiveInfinity;

        // Row k of L and pivot d_k, k = 0 .. n-1.
        for (int k = 0; k < n; k++)
        {
            // y = C(0:k,k) scattered; reach[top..n) = pattern of row k of L in topological order.
            y[k] = 0;
            flag[k] = k;
            Lnz[k] = 0;
            int top = n;
            for (int q = cp[k]; q < cp[k + 1]; q++)
            {
                int i = ci[q];
                y[i] += values[cs[q]];
                // Path i -> parent -> ... until a node already in row k; pushed so ancestors come later.
                int depth = 0;
                for (; flag[i] != k; i = parent[i])
                {
                    reach[depth++] = i;
                    flag[i] = k;
                }
                while (depth > 0) reach[--top] = reach[--depth];
            }

            // Sparse triangular solve: for each i in the reach, y -= L(:,i) y_i; L(k,i) = y_i / d_i.
            double d = y[k];
            y[k] = 0;
            for (int t = top; t < n; t++)
            {
                int i = reach[t];
                double yi = y[i];
                y[i] = 0;
                int end = Lp[i] + Lnz[i];
                for (int p = Lp[i]; p < end; p++) y[Li[p]] -= Lx[p] * yi;
                double lki = yi / D[i];
                d -= lki * yi;
                Li[end] = k;
                Lx[end] = lki;
                Lnz[i]++;
            }
            D[k] = d;

            // Pivot test against scale_k = |A_kk|, or max |A_ii| when A_kk = 0.
            double akk = Math.Abs(values[cs[cp[k + 1] - 1]]);
            double scale = akk != 0 ? akk : maxDiagonal;
            if (d == 0 || !double.IsFinite(d))
            {
                Status = LdlStatus.ZeroPivot;
                if (TinyPivotIndex < 0) TinyPivotIndex = perm[k];
                SmallestPivotRatio = 0;
                return Status;
            }
            double ratio = scale > 0 ? Math.Abs(d) / scale : double.PositiveInfinity;
            if (ratio < SmallestPivotRatio) SmallestPivotRatio = ratio;
            if (Math.Abs(d) <= singularPivotRatio * scale)
            {
                Status = LdlStatus.TinyPivot;
                if (TinyPivotIndex < 0) TinyPivotIndex = perm[k];
            }
            if (d < 0) NegativePivotCount++;
        }
        return Status;
    }

    /// <summary>Overwrites b with A^{-1} b (original ordering).</summary>
    /// <exception cref="InvalidOperationException">Factorize was not called or reported ZeroPivot.</exception>
    public void Solve(Span<double> rhsInPlace)
    {
        if (!factorized || Status == LdlStatus.ZeroPivot)
            throw new InvalidOperationException("No usable factorisation: call Factorize first and check that it did not report ZeroPivot.");
        if (rhsInPlace.Length != n)
            throw new ArgumentException($"Right-hand side must have length {n}, got {rhsInPlace.Length}.", nameof(rhsInPlace));

        // w = P b.
        for (int k = 0; k < n; k++) work[k] = rhsInPlace[perm[k]];

        // Forward substitution L z = w, column by column.
        for (int j = 0; j < n; j++)
        {
            double wj = work[j];
            int end = Lp[j] + Lnz[j];
            for (int p = Lp[j]; p < end; p++) work[Li[p]] -= Lx[p] * wj;
        }

        // Diagonal D u = z.
        for (int j = 0; j < n; j++) work[j] /= D[j];

        // Backward substitution L^T v = u, row j of L^T is column j of L.
        for (int j = n - 1; j >= 0; j--)
        {
            double s = work[j];
            int end = Lp[j] + Lnz[j];
            for (int p = Lp[j]; p < end; p++) s -= Lx[p] * work[Li[p]];
            work[j] = s;
        }

        // x = P^T v.
        for (int k = 0; k < n; k++) rhsInPlace[perm[k]] = work[k];
    }

    /// <summary>Writes x = A^{-1} b (original ordering); b is not modified unless it overlaps x.</summary>
    public void Solve(ReadOnlySpan<double> b, Span<double> x)
    {
        if (b.Length != n)
            throw new ArgumentException($"Right-hand side must have length {n}, got {b.Length}.", nameof(b));
        if (x.Length != n)
            throw new ArgumentException($"Solution must have length {n}, got {x.Length}.", nameof(x));
        b.CopyTo(x); // memmove semantics: correct even if b and x overlap
        Solve(x);
    }
}
