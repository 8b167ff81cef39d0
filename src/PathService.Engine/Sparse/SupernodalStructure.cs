// SupernodalStructure: symbolic data of the supernodal multifrontal LDL^T
// factorisation, computed once per pattern on top of an LdlSymbolic.
//
// Method:
//  1. The fill-reducing permutation of the LdlSymbolic is composed with a
//     postorder of its elimination tree (an equivalent ordering: same fill,
//     same pivots in exact arithmetic; Liu, "The role of elimination trees in
//     sparse factorization", SIAM J. Matrix Anal. Appl. 11(1), 1990), so that
//     every subtree is a contiguous range of columns.
//  2. Fundamental supernodes (Liu, Ng and Peyton, "On finding supernodes for
//     sparse matrix computations", SIAM J. Matrix Anal. Appl. 14(1), 1993):
//     column j joins column j-1 when j is the only child of j-1's parent link
//     and the column counts differ by one.
//  3. Relaxed amalgamation (Ashcraft and Grimes, "The influence of relaxed
//     supernode partitions on the multifrontal method", ACM TOMS 15(4), 1989):
//     a child that immediately precedes its parent is merged into it when the
//     explicit zeros this introduces stay below a size-dependent fraction.
//  4. Row structure of each supernode, the map from the caller's value slots
//     into the dense factor blocks (assembly), the relative indices of each
//     child's rows inside its parent's front (extend-add; Duff and Reid, "The
//     multifrontal solution of indefinite sparse symmetric linear equations",
//     ACM TOMS 9(3), 1983), a static schedule of independent subtrees for the
//     threads, and the stack offsets of the contribution blocks.
//
// Data structure: supernode s owns columns [First[s], First[s+1]) of the
// permuted matrix and the rows Rows[RowPtr[s]..RowPtr[s+1]) below them; its
// factor block is dense column-major, nf x nc (nf = nc + nr), at LOffset[s].
// Contribution blocks (nr x nr) live in stack arenas: one region per subtree
// task and one for the top of the tree; the block of s is formed at
// ScratchOffset[s] and moved down to UOffset[s] once its children are consumed.
// Limits: the dense factor blocks must fit one array (Array.MaxLength doubles).

namespace PathService.Engine.Sparse;

internal sealed class SupernodalStructure
{
    public readonly int N;
    public readonly int[] Perm, Inv;           // Perm[k] = original index eliminated k-th (postordered)
    public readonly int SupernodeCount;
    public readonly int[] First;               // length ns+1
    public readonly int[] SuperParent;         // -1 for roots
    public readonly int[] RowPtr, Rows;        // rows below each supernode, ascending (permuted indices)
    public readonly int[] Rel;                 // aligned with Rows: position of the row in the parent's front
    public readonly long[] LOffset;            // length ns+1
    public readonly int[] AsmPtr, AsmDst, AsmSrc;
    public readonly int[] ChildPtr, Children;  // children of each supernode, ascending
    public readonly long[] UOffset, ScratchOffset; // offsets of contribution blocks in the arena
    public readonly long ArenaLength;
    public readonly int[] TaskPtr;             // task t = supernodes TaskSupers[TaskPtr[t]..TaskPtr[t+1]) in postorder
    public readonly int[] TaskSupers;
    public readonly int[] TopSupers;           // supernodes above the tasks, in postorder
    public readonly int[] DiagonalSlot;        // original index -> slot of A_ii in the caller's values
    public readonly int[] MineOfReference;     // reference elimination position k -> position in Perm
    public readonly int MaxFront, MaxRows;
    public readonly double[] SupernodeFlops;   // dense flops of each supernode's partial factorisation
    public readonly double TotalFlops;         // sum of SupernodeFlops (includes the explicit zeros)

    public SupernodalStructure(LdlSymbolic symbolic, int taskTarget)
    {
        var pattern = symbolic.Pattern;
        int n = N = pattern.Size;

        // 1. Postorder the elimination tree and compose the permutations.
        int[] post = Postorder(symbolic.Parent);
        Perm = new int[n];
        for (int k = 0; k < n; k++) Perm[k] = symbolic.Permutation[post[k]];
        Inv = new int[n];
        for (int k = 0; k < n; k++) Inv[Perm[k]] = k;
        var upper = new PermutedUpperPattern(pattern, Inv);
        EliminationTree.Compute(n, upper.Cp, upper.Ci, out var parent, out var counts);

        MineOfReference = new int[n];
        for (int k = 0; k < n; k++) MineOfReference[k] = Inv[symbolic.Permutation[k]];
        DiagonalSlot = new int[n];
        for (int j = 0; j < n; j++) DiagonalSlot[j] = pattern.ColumnPointers[j + 1] - 1;

        // 2. Fundamental supernodes.
        var childCount = new int[n];
        for (int j = 0; j < n; j++) if (parent[j] >= 0) childCount[parent[j]]++;
        var fFirst = new List<int>();
        for (int j = 0; j < n; j++)
        {
            bool joins = j > 0 && parent[j - 1] == j && counts[j - 1] == counts[j] + 1 && childCount[j] == 1;
            if (!joins) fFirst.Add(j);
        }
        int nf0 = fFirst.Count;
        fFirst.Add(n);
        var fSuperOf = new int[n];
        for (int s = 0; s < nf0; s++)
            for (int j = fFirst[s]; j < fFirst[s + 1]; j++) fSuperOf[j] = s;

        // 3. Relaxed amalgamation with a stack of merged supernodes (ascending first column).
        var stFirst = new List<int>(); var stNc = new List<int>(); var stNr = new List<int>();
        var stTrue = new List<double>(); var stParent = new List<int>();
        for (int p = 0; p < nf0; p++)
        {
            int first = fFirst[p], nc = fFirst[p + 1] - first, nr = counts[fFirst[p + 1] - 1];
            double trueEntries = Entries(nc, nr);
            int last = fFirst[p + 1] - 1;
            int fParent = parent[last] >= 0 ? fSuperOf[parent[last]] : -1;
            while (stFirst.Count > 0)
            {
                int t = stFirst.Count - 1;
                if (stParent[t] != p || stFirst[t] + stNc[t] != first) break;
                int mergedNc = stNc[t] + nc;
                double mergedEntries = Entries(mergedNc, nr);
                double zeros = mergedEntries - stTrue[t] - trueEntries;
                if (!AcceptMerge(mergedNc, zeros / mergedEntries)) break;
                first = stFirst[t]; nc = mergedNc; trueEntries += stTrue[t];
                stFirst.RemoveAt(t); stNc.RemoveAt(t); stNr.RemoveAt(t); stTrue.RemoveAt(t); stParent.RemoveAt(t);
            }
            stFirst.Add(first); stNc.Add(nc); stNr.Add(nr); stTrue.Add(trueEntries); stParent.Add(fParent);
        }
        int ns = SupernodeCount = stFirst.Count;
        First = new int[ns + 1];
        for (int s = 0; s < ns; s++) First[s] = stFirst[s];
        First[ns] = n;
        var superOf = new int[n];
        for (int s = 0; s < ns; s++)
            for (int j = First[s]; j < First[s + 1]; j++) superOf[j] = s;
        SuperParent = new int[ns];
        for (int s = 0; s < ns; s++)
        {
            int last = First[s + 1] - 1;
            SuperParent[s] = parent[last] >= 0 ? superOf[parent[last]] : -1;
        }

        // Children lists (ascending).
        ChildPtr = new int[ns + 1];
        for (int s = 0; s < ns; s++) if (SuperParent[s] >= 0) ChildPtr[SuperParent[s] + 1]++;
        for (int s = 0; s < ns; s++) ChildPtr[s + 1] += ChildPtr[s];
        Children = new int[ChildPtr[ns]];
        {
            var fill = (int[])ChildPtr.Clone();
            for (int s = 0; s < ns; s++) if (SuperParent[s] >= 0) Children[fill[SuperParent[s]]++] = s;
        }

        // Lower access to C = P A P^T: for column j the entries (k, j), k >= j, with their source slots.
        var lowPtr = new int[n + 1];
        for (int q = 0; q < upper.Ci.Length; q++) lowPtr[upper.Ci[q] + 1]++;
        for (int j = 0; j < n; j++) lowPtr[j + 1] += lowPtr[j];
        var lowRow = new int[upper.Ci.Length];
        var lowSlot = new int[upper.Ci.Length];
        {
            var fill = (int[])lowPtr.Clone();
            for (int k = 0; k < n; k++)
                for (int q = upper.Cp[k]; q < upper.Cp[k + 1]; q++)
                {
                    int dst = fill[upper.Ci[q]]++;
                    lowRow[dst] = k;
                    lowSlot[dst] = upper.Cs[q];
                }
        }

        // 4. Row structures: R_s = rows > last(s) of A's columns in s, and of the children's R_c.
        var mark = new int[n];
        Array.Fill(mark, -1);
        var rowList = new List<int>();
        RowPtr = new int[ns + 1];
        var rowsTmp = new List<int>();
        for (int s = 0; s < ns; s++)
        {
            int last = First[s + 1] - 1;
            rowsTmp.Clear();
            for (int j = First[s]; j <= last; j++)
                for (int q = lowPtr[j]; q < lowPtr[j + 1]; q++)
                {
                    int k = lowRow[q];
                    if (k > last && mark[k] != s) { mark[k] = s; rowsTmp.Add(k); }
                }
            for (int c = ChildPtr[s]; c < ChildPtr[s + 1]; c++)
            {
                int ch = Children[c];
                for (int r = RowPtr[ch]; r < RowPtr[ch + 1]; r++)
                {
                    int k = rowList[r];
                    if (k > last && mark[k] != s) { mark[k] = s; rowsTmp.Add(k); }
                }
            }
            rowsTmp.Sort();
            rowList.AddRange(rowsTmp);
            RowPtr[s + 1] = rowList.Count;
        }
        Rows = rowList.ToArray();

        // Factor block offsets.
        LOffset = new long[ns + 1];
        SupernodeFlops = new double[ns];
        for (int s = 0; s < ns; s++)
        {
            int nc = First[s + 1] - First[s], nr = RowPtr[s + 1] - RowPtr[s], nfr = nc + nr;
            LOffset[s + 1] = LOffset[s] + (long)nfr * nc;
            MaxFront = Math.Max(MaxFront, nfr);
            MaxRows = Math.Max(MaxRows, nr);
            // Columns of the front: column i of s has nfr - i - 1 entries below the diagonal.
            double f = 0;
            for (int i = 0; i < nc; i++) { double c = nfr - i - 1; f += c * c + c; }
            SupernodeFlops[s] = f;
            TotalFlops += f;
        }
        if (LOffset[ns] > Array.MaxLength)
            throw new ArgumentException($"The supernodal factor would hold {LOffset[ns]} entries, more than one array can store.");

        // Relative indices of each child's rows in the front of its parent.
        Rel = new int[Rows.Length];
        var pos = new int[n];
        for (int p = 0; p < ns; p++)
        {
            int fp = First[p], ncp = First[p + 1] - fp;
            for (int j = fp; j < First[p + 1]; j++) pos[j] = j - fp;
            for (int r = RowPtr[p]; r < RowPtr[p + 1]; r++) pos[Rows[r]] = ncp + r - RowPtr[p];
            for (int c = ChildPtr[p]; c < ChildPtr[p + 1]; c++)
            {
                int ch = Children[c];
                for (int r = RowPtr[ch]; r < RowPtr[ch + 1]; r++) Rel[r] = pos[Rows[r]];
            }
        }

        // Assembly map: lower entry (k, j) of C -> block of supernode(j), local column j - first, local row pos(k).
        AsmPtr = new int[ns + 1];
        var asmDst = new List<int>(upper.Ci.Length);
        var asmSrc = new List<int>(upper.Ci.Length);
        for (int s = 0; s < ns; s++)
        {
            int fs = First[s], nc = First[s + 1] - fs, nfr = nc + RowPtr[s + 1] - RowPtr[s];
            for (int j = fs; j < First[s + 1]; j++) pos[j] = j - fs;
            for (int r = RowPtr[s]; r < RowPtr[s + 1]; r++) pos[Rows[r]] = nc + r - RowPtr[s];
            for (int j = fs; j < First[s + 1]; j++)
                for (int q = lowPtr[j]; q < lowPtr[j + 1]; q++)
                {
                    long dst = LOffset[s] + (long)(j - fs) * nfr + pos[lowRow[q]];
                    asmDst.Add(checked((int)dst));
                    asmSrc.Add(lowSlot[q]);
                }
            AsmPtr[s + 1] = asmDst.Count;
        }
        AsmDst = asmDst.ToArray();
        AsmSrc = asmSrc.ToArray();

        // Schedule: split the tree from the roots until the subtrees balance over the threads.
        var subtreeWork = new double[ns];
        for (int s = 0; s < ns; s++)
        {
            subtreeWork[s] += SupernodeFlops[s];
            if (SuperParent[s] >= 0) subtreeWork[SuperParent[s]] += subtreeWork[s];
        }
        var isTop = new bool[ns];
        var candidates = new List<int>();
        for (int s = 0; s < ns; s++) if (SuperParent[s] < 0) candidates.Add(s);
        double minTaskWork = 2e5;
        while (taskTarget > 1)
        {
            double sum = 0; int best = -1;
            foreach (int c in candidates)
            {
                sum += subtreeWork[c];
                if (best < 0 || subtreeWork[c] > subtreeWork[best]) best = c;
            }
            if (best < 0 || subtreeWork[best] <= sum / taskTarget || subtreeWork[best] < minTaskWork) break;
            if (ChildPtr[best] == ChildPtr[best + 1]) break;
            candidates.Remove(best);
            isTop[best] = true;
            for (int c = ChildPtr[best]; c < ChildPtr[best + 1]; c++) candidates.Add(Children[c]);
        }
        if (taskTarget <= 1)
        {
            candidates.Clear();
            for (int s = 0; s < ns; s++) if (SuperParent[s] < 0) candidates.Add(s);
        }
        // Largest first (ties by index), so a dynamic queue balances well.
        candidates.Sort((a, b) => subtreeWork[b] != subtreeWork[a] ? subtreeWork[b].CompareTo(subtreeWork[a]) : a.CompareTo(b));
        var firstDesc = new int[ns];
        for (int s = 0; s < ns; s++) firstDesc[s] = s;
        for (int s = 0; s < ns; s++) if (SuperParent[s] >= 0) firstDesc[SuperParent[s]] = Math.Min(firstDesc[SuperParent[s]], firstDesc[s]);
        TaskPtr = new int[candidates.Count + 1];
        var taskSupers = new List<int>(ns);
        for (int t = 0; t < candidates.Count; t++)
        {
            int root = candidates[t];
            for (int s = firstDesc[root]; s <= root; s++) taskSupers.Add(s);
            TaskPtr[t + 1] = taskSupers.Count;
        }
        TaskSupers = taskSupers.ToArray();
        var top = new List<int>();
        for (int s = 0; s < ns; s++) if (isTop[s]) top.Add(s);
        TopSupers = top.ToArray();

        // Stack arenas: one region per task, then one for the top.
        UOffset = new long[ns];
        ScratchOffset = new long[ns];
        long regionBase = 0;
        var region = new int[ns];
        for (int t = 0; t < candidates.Count; t++)
            for (int i = TaskPtr[t]; i < TaskPtr[t + 1]; i++) region[TaskSupers[i]] = t;
        foreach (int s in TopSupers) region[s] = -1;
        for (int t = 0; t <= candidates.Count; t++)
        {
            ReadOnlySpan<int> list = t < candidates.Count ? TaskSupers.AsSpan(TaskPtr[t], TaskPtr[t + 1] - TaskPtr[t]) : TopSupers;
            int reg = t < candidates.Count ? t : -1;
            long topPtr = regionBase, peak = regionBase;
            foreach (int s in list)
            {
                long nr = RowPtr[s + 1] - RowPtr[s];
                long size = nr * nr;
                ScratchOffset[s] = topPtr;
                peak = Math.Max(peak, topPtr + size);
                long dest = topPtr;
                for (int c = ChildPtr[s]; c < ChildPtr[s + 1]; c++)
                {
                    int ch = Children[c];
                    if (region[ch] == reg) { dest = Math.Min(dest, UOffset[ch]); }
                }
                UOffset[s] = dest;
                topPtr = dest + size;
            }
            regionBase = peak;
        }
        ArenaLength = regionBase;
    }

    /// <summary>Entries of the lower trapezoid of a front with nc pivot columns and nr rows below.</summary>
    private static double Entries(int nc, int nr) => nc * (nc + 1) / 2.0 + (double)nc * nr;

    /// <summary>Relaxed-amalgamation rule: small supernodes merge freely, larger ones only with few explicit zeros.</summary>
    private static bool AcceptMerge(int mergedColumns, double zeroFraction) => mergedColumns switch
    {
        <= 4 => true,
        <= 16 => zeroFraction < 0.5,
        <= 48 => zeroFraction < 0.1,
        _ => zeroFraction < 0.05,
    };

    /// <summary>Postorder of a forest given by parent links: post[k] = node visited k-th, children in ascending order.</summary>
    internal static int[] Postorder(int[] parent)
    {
        int n = parent.Length;
        var head = new int[n];
        var next = new int[n];
        Array.Fill(head, -1);
        for (int j = n - 1; j >= 0; j--)
        {
            int p = parent[j];
            if (p < 0) continue;
            next[j] = head[p];
            head[p] = j;
        }
        var post = new int[n];
        var stack = new int[n];
        int k = 0;
        for (int root = 0; root < n; root++)
        {
            if (parent[root] >= 0) continue;
            int top = 0;
            stack[0] = root;
            while (top >= 0)
            {
                int p = stack[top];
                int child = head[p];
                if (child < 0)
                {
                    top--;
                    post[k++] = p;
                }
                else
                {
                    head[p] = next[child];
                    stack[++top] = child;
                }
            }
        }
        return post;
    }
}
