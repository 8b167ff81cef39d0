// SolveSchedule: how the triangular solves of a supernodal factor are shared
// among threads.
//
// The solves are bound by memory bandwidth (each streams the whole factor), so
// the work of a supernode is its stored lower entries, not its flops. The tree
// is split from the roots, largest subtree first, until no subtree holds more
// than 1/TargetTasks of the entries (subtrees under MinTaskEntries are not
// split further). The subtrees are the tasks; the supernodes above them (the
// top) are solved by one thread.
//
// Forward solve: a supernode's updates go to its own ancestors. Inside a task
// they land in x directly; updates of top columns are summed in a private
// buffer per task (compact: only the top columns that task touches), and the
// buffers are added to x in task order before the top is solved. Backward
// solve: the top first, then the tasks in parallel (each only reads its
// ancestors). The schedule depends on the factor's structure only, never on
// the thread count, so every result is bit-identical for any thread count.
//
// Method: subtree-to-thread mapping of sparse triangular solves, as in the
// parallel multifrontal literature (e.g. Gupta and Kumar, "Parallel
// algorithms for forward and back substitution in direct solution of sparse
// linear systems", Supercomputing '95; from memory).

namespace PathService.Engine.Sparse;

internal sealed class SolveSchedule
{
    public const int TargetTasks = 8;
    public const long MinTaskEntries = 40_000;

    /// <summary>Task t owns supernodes [SuperBegin[t], SuperEnd[t]) and columns [ColumnBegin[t], ColumnEnd[t]).</summary>
    public readonly int[] SuperBegin, SuperEnd, ColumnBegin, ColumnEnd;

    /// <summary>Supernodes above the tasks, in postorder.</summary>
    public readonly int[] TopSupers;

    /// <summary>
    /// Aligned with <see cref="SupernodalStructure.Rows"/> for supernodes inside tasks: the row itself when it is a
    /// column of the same task, otherwise ~k with k the slot of that top column in the task's buffer.
    /// </summary>
    public readonly int[] Target;

    /// <summary>Task t's buffer slots are BufferPtr[t] .. BufferPtr[t+1]; slot k adds into column BufferColumn[k].</summary>
    public readonly int[] BufferPtr, BufferColumn;

    /// <summary>Share of the stored factor entries that lie inside the tasks (solved in parallel).</summary>
    public readonly double ParallelShare;

    public int TaskCount => SuperBegin.Length;

    public SolveSchedule(SupernodalStructure s)
    {
        int ns = s.SupernodeCount;
        var entries = new long[ns];
        var subtree = new long[ns];
        long total = 0;
        for (int k = 0; k < ns; k++)
        {
            long nc = s.First[k + 1] - s.First[k], nr = s.RowPtr[k + 1] - s.RowPtr[k];
            entries[k] = nc * nr + nc * (nc + 1) / 2;
            total += entries[k];
            subtree[k] += entries[k];
            if (s.SuperParent[k] >= 0) subtree[s.SuperParent[k]] += subtree[k];
        }

        var isTop = new bool[ns];
        var candidates = new List<int>();
        for (int k = 0; k < ns; k++) if (s.SuperParent[k] < 0) candidates.Add(k);
        if (total < TargetTasks * MinTaskEntries)
        {
            // Too small to share: everything is top (one thread, no buffers).
            candidates.Clear();
            for (int k = 0; k < ns; k++) isTop[k] = true;
        }
        while (candidates.Count > 0)
        {
            int best = -1;
            foreach (int c in candidates) if (best < 0 || subtree[c] > subtree[best]) best = c;
            if (subtree[best] <= total / TargetTasks || subtree[best] < MinTaskEntries) break;
            if (s.ChildPtr[best] == s.ChildPtr[best + 1]) break;
            candidates.Remove(best);
            isTop[best] = true;
            for (int c = s.ChildPtr[best]; c < s.ChildPtr[best + 1]; c++) candidates.Add(s.Children[c]);
        }
        // Largest first, so the dynamic queue balances; ties by index.
        candidates.Sort((a, b) => subtree[b] != subtree[a] ? subtree[b].CompareTo(subtree[a]) : a.CompareTo(b));

        var firstDesc = new int[ns];
        for (int k = 0; k < ns; k++) firstDesc[k] = k;
        for (int k = 0; k < ns; k++)
            if (s.SuperParent[k] >= 0) firstDesc[s.SuperParent[k]] = Math.Min(firstDesc[s.SuperParent[k]], firstDesc[k]);

        int tasks = candidates.Count;
        SuperBegin = new int[tasks];
        SuperEnd = new int[tasks];
        ColumnBegin = new int[tasks];
        ColumnEnd = new int[tasks];
        Target = new int[s.Rows.Length];
        BufferPtr = new int[tasks + 1];
        var bufferColumns = new List<int>();
        var slotOf = new Dictionary<int, int>();
        long inTasks = 0;
        for (int t = 0; t < tasks; t++)
        {
            int root = candidates[t];
            SuperBegin[t] = firstDesc[root];
            SuperEnd[t] = root + 1;
            ColumnBegin[t] = s.First[SuperBegin[t]];
            ColumnEnd[t] = s.First[SuperEnd[t]];
            inTasks += subtree[root];
            slotOf.Clear();
            for (int k = SuperBegin[t]; k < SuperEnd[t]; k++)
                for (int q = s.RowPtr[k]; q < s.RowPtr[k + 1]; q++)
                {
                    int row = s.Rows[q];
                    if (row < ColumnEnd[t]) { Target[q] = row; continue; }
                    if (!slotOf.TryGetValue(row, out int slot))
                    {
                        slot = bufferColumns.Count - BufferPtr[t];
                        slotOf.Add(row, slot);
                        bufferColumns.Add(row);
                    }
                    Target[q] = ~slot;
                }
            BufferPtr[t + 1] = bufferColumns.Count;
        }
        BufferColumn = bufferColumns.ToArray();
        var top = new List<int>();
        for (int k = 0; k < ns; k++) if (isTop[k]) top.Add(k);
        TopSupers = top.ToArray();
        ParallelShare = total > 0 ? (double)inTasks / total : 0;
    }
}
