// SymmetricPattern: the sparsity pattern of a symmetric n-by-n matrix, stored once.
//
// Data structure: upper-triangular compressed sparse columns. For column j the
// row indices RowIndices[ColumnPointers[j] .. ColumnPointers[j+1]) are the rows
// i <= j holding a structural nonzero, strictly ascending, and the diagonal j is
// always present (hence it is the last entry of every column). A numeric matrix
// on this pattern is a values array aligned with RowIndices ("slots").
//
// Takes: size, column pointers and row indices (validated here; every later
// phase assumes a valid pattern), or a list of (row, col) pairs in either triangle.
// Returns: slot lookups for building assembly maps.
// Limits: the arrays are kept by reference, callers must not mutate them afterwards.

namespace PathService.Engine.Sparse;

/// <summary>
/// Upper-triangular compressed-column pattern of a symmetric n×n matrix: for column j,
/// RowIndices[ColumnPointers[j]..ColumnPointers[j+1]) are the rows i&lt;=j, sorted ascending,
/// diagonal always present (last entry of each column).
/// </summary>
public sealed class SymmetricPattern
{
    /// <summary>Validates and wraps an upper compressed-column pattern.</summary>
    /// <exception cref="ArgumentException">The arrays do not describe a valid pattern.</exception>
    public SymmetricPattern(int size, int[] columnPointers, int[] rowIndices)
    {
        ArgumentNullException.ThrowIfNull(columnPointers);
        ArgumentNullException.ThrowIfNull(rowIndices);
        if (size < 0)
            throw new ArgumentException($"Size must be non-negative, got {size}.", nameof(size));
        if (columnPointers.Length != size + 1)
            throw new ArgumentException(
                $"ColumnPointers must have Size+1 = {size + 1} entries, got {columnPointers.Length}.", nameof(columnPointers));
        if (columnPointers[0] != 0)
            throw new ArgumentException($"ColumnPointers[0] must be 0, got {columnPointers[0]}.", nameof(columnPointers));
        if (columnPointers[size] != rowIndices.Length)
            throw new ArgumentException(
                $"ColumnPointers[Size] = {columnPointers[size]} must equal RowIndices.Length = {rowIndices.Length}.", nameof(columnPointers));

        // Each column j: pointers non-decreasing, rows strictly ascending in [0, j], last row = j.
        for (int j = 0; j < size; j++)
        {
            int start = columnPointers[j], end = columnPointers[j + 1];
            if (end <= start)
                throw new ArgumentException($"Column {j} is empty; the diagonal entry ({j},{j}) is required.", nameof(columnPointers));
            for (int p = start; p < end; p++)
            {
                int i = rowIndices[p];
                if (i < 0 || i > j)
                    throw new ArgumentException($"Row index {i} in column {j} is outside the upper triangle [0, {j}].", nameof(rowIndices));
                if (p > start && i <= rowIndices[p - 1])
                    throw new ArgumentException($"Row indices of column {j} are not strictly ascending at row {i}.", nameof(rowIndices));
            }
            if (rowIndices[end - 1] != j)
                throw new ArgumentException($"Column {j} lacks its diagonal entry ({j},{j}).", nameof(rowIndices));
        }

        Size = size;
        ColumnPointers = columnPointers;
        RowIndices = rowIndices;
    }

    /// <summary>Order n of the matrix.</summary>
    public int Size { get; }

    /// <summary>Column start offsets, length Size+1.</summary>
    public int[] ColumnPointers { get; }

    /// <summary>Row index of each stored upper entry.</summary>
    public int[] RowIndices { get; }

    /// <summary>Number of stored upper-triangular entries (diagonal included).</summary>
    public int NonZeroCount => RowIndices.Length;

    /// <summary>
    /// Slot of entry (row, col) in a values array aligned with RowIndices; entries given in either
    /// triangle (row&gt;col is swapped); -1 if absent. Binary search: for building slot maps once,
    /// not for hot loops.
    /// </summary>
    public int FindSlot(int row, int col)
    {
        if (row > col) (row, col) = (col, row);
        if (row < 0 || col >= Size) return -1;
        int start = ColumnPointers[col];
        int slot = Array.BinarySearch(RowIndices, start, ColumnPointers[col + 1] - start, row);
        return slot >= 0 ? slot : -1;
    }

    /// <summary>Builds a pattern from (row, col) pairs in either triangle; duplicates merged, every diagonal added.</summary>
    public static SymmetricPattern FromEntries(int size, IEnumerable<(int Row, int Col)> entries)
    {
        ArgumentNullException.ThrowIfNull(entries);
        if (size < 0)
            throw new ArgumentException($"Size must be non-negative, got {size}.", nameof(size));

        // Mirror every pair into the upper triangle (i <= j) and count entries per column.
        var rows = new List<int>();
        var cols = new List<int>();
        var count = new int[size + 1];
        foreach (var (r, c) in entries)
        {
            if ((uint)r >= (uint)size || (uint)c >= (uint)size)
                throw new ArgumentException($"Entry ({r},{c}) lies outside a {size}x{size} matrix.", nameof(entries));
            int i = Math.Min(r, c), j = Math.Max(r, c);
            if (i == j) continue; // diagonals are added below, once each
            rows.Add(i);
            cols.Add(j);
            count[j]++;
        }
        for (int j = 0; j < size; j++) count[j]++; // the diagonal of every column

        // Column pointers as the prefix sums of the counts.
        var cp = new int[size + 1];
        for (int j = 0; j < size; j++) cp[j + 1] = cp[j] + count[j];

        // Bucket the rows into their columns, diagonal last.
        var next = new int[size];
        Array.Copy(cp, next, size);
        var ri = new int[cp[size]];
        for (int e = 0; e < rows.Count; e++) ri[next[cols[e]]++] = rows[e];
        for (int j = 0; j < size; j++) ri[next[j]++] = j;

        // Sort each column and drop duplicate rows, compacting in place.
        int write = 0;
        for (int j = 0; j < size; j++)
        {
            int start = cp[j], end = cp[j + 1];
            Array.Sort(ri, start, end - start);
            cp[j] = write;
            for (int p = start; p < end; p++)
                if (p == start || ri[p] != ri[p - 1]) ri[write++] = ri[p];
        }
        cp[size] = write;
        if (write != ri.Length) Array.Resize(ref ri, write);
        return new SymmetricPattern(size, cp, ri);
    }
}
