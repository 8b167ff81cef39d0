// INTERIM dense stand-in with the sparse API, replaced by the real sparse LDLᵀ on merge. Do not ship.
namespace PathService.Engine.Sparse;

public sealed class SymmetricPattern
{
    public SymmetricPattern(int size, int[] columnPointers, int[] rowIndices)
    { Size = size; ColumnPointers = columnPointers; RowIndices = rowIndices; }
    public int Size { get; }
    public int[] ColumnPointers { get; }
    public int[] RowIndices { get; }
    public int NonZeroCount => RowIndices.Length;
    public int FindSlot(int row, int col)
    {
        if (row > col) (row, col) = (col, row);
        int lo = ColumnPointers[col], hi = ColumnPointers[col + 1] - 1;
        while (lo <= hi) { int m = (lo + hi) / 2; if (RowIndices[m] == row) return m; if (RowIndices[m] < row) lo = m + 1; else hi = m - 1; }
        return -1;
    }
    public static SymmetricPattern FromEntries(int size, IEnumerable<(int Row, int Col)> entries)
    {
        var cols = new SortedSet<int>[size];
        for (int j = 0; j < size; j++) cols[j] = [j];
        foreach (var (r, c) in entries) { int a = Math.Min(r, c), b = Math.Max(r, c); cols[b].Add(a); }
        var cp = new int[size + 1]; var ri = new List<int>();
        for (int j = 0; j < size; j++) { ri.AddRange(cols[j]); cp[j + 1] = ri.Count; }
        return new SymmetricPattern(size, cp, ri.ToArray());
    }
}
public enum OrderingMethod { Natural, ApproximateMinimumDegree }
public sealed class LdlSymbolic
{
    public static LdlSymbolic Analyze(SymmetricPattern pattern, OrderingMethod ordering = OrderingMethod.ApproximateMinimumDegree) => new() { Pattern = pattern };
    public SymmetricPattern Pattern { get; private init; } = null!;
    public long FactorNonZeroCount => (long)Pattern.Size * (Pattern.Size - 1) / 2;
    public double FactorFlopCount => Math.Pow(Pattern.Size, 3) / 3;
    public TimeSpan OrderingTime => TimeSpan.Zero;
    public TimeSpan SymbolicTime => TimeSpan.Zero;
}
public enum LdlStatus { Success, TinyPivot, ZeroPivot }
public sealed class LdlFactorization(LdlSymbolic symbolic)
{
    private readonly int n = symbolic.Pattern.Size;
    private readonly double[,] a = new double[symbolic.Pattern.Size, symbolic.Pattern.Size];
    private readonly double[] d = new double[symbolic.Pattern.Size];
    public LdlSymbolic Symbolic => symbolic;
    public LdlStatus Status { get; private set; }
    public int NegativePivotCount { get; private set; }
    public int TinyPivotIndex { get; private set; } = -1;
    public double SmallestPivotRatio { get; private set; }
    public LdlStatus Factorize(ReadOnlySpan<double> values, double tinyPivotRatio = 1e-11)
    {
        var p = symbolic.Pattern; Array.Clear(a);
        for (int j = 0; j < n; j++) for (int s = p.ColumnPointers[j]; s < p.ColumnPointers[j + 1]; s++) { a[p.RowIndices[s], j] = values[s]; a[j, p.RowIndices[s]] = values[s]; }
        double maxDiag = 0; for (int i = 0; i < n; i++) maxDiag = Math.Max(maxDiag, Math.Abs(a[i, i]));
        NegativePivotCount = 0; TinyPivotIndex = -1; Status = LdlStatus.Success; SmallestPivotRatio = double.MaxValue;
        for (int k = 0; k < n; k++)
        {
            double scale = a[k, k] != 0 ? Math.Abs(a[k, k]) : maxDiag;
            for (int m = 0; m < k; m++) a[k, k] -= a[k, m] * a[k, m] * d[m];
            d[k] = a[k, k];
            double ratio = Math.Abs(d[k]) / scale; SmallestPivotRatio = Math.Min(SmallestPivotRatio, ratio);
            if (d[k] == 0 || !double.IsFinite(d[k])) { Status = LdlStatus.ZeroPivot; if (TinyPivotIndex < 0) TinyPivotIndex = k; return Status; }
            if (ratio <= tinyPivotRatio && TinyPivotIndex < 0) { Status = LdlStatus.TinyPivot; TinyPivotIndex = k; }
            if (d[k] < 0) NegativePivotCount++;
            for (int i = k + 1; i < n; i++)
            {
                double s = a[i, k];
                for (int m = 0; m < k; m++) s -= a[i, m] * a[k, m] * d[m];
                a[i, k] = s / d[k];
            }
        }
        return Status;
    }
    public void Solve(Span<double> b)
    {
        for (int i = 0; i < n; i++) for (int m = 0; m < i; m++) b[i] -= a[i, m] * b[m];
        for (int i = 0; i < n; i++) b[i] /= d[i];
        for (int i = n - 1; i >= 0; i--) for (int m = i + 1; m < n; m++) b[i] -= a[m, i] * b[m];
    }
    public void Solve(ReadOnlySpan<double> b, Span<double> x) { b.CopyTo(x); Solve(x); }
}
