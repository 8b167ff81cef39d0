// ApproximateMinimumDegree: fill-reducing symmetric ordering.
//
// Method: P. R. Amestoy, T. A. Davis and I. S. Duff, "An approximate minimum
// degree ordering algorithm", SIAM J. Matrix Anal. Appl. 17(4):886-905, 1996.
// Elimination is simulated on the quotient graph: each eliminated pivot p
// becomes an element whose variable list L_p is the clique it would create.
// Included: element absorption (every element adjacent to p is absorbed into p,
// and aggressive absorption of any element e with L_e inside L_p), the
// approximate external degree
//     d_i = min( n_remaining - |i|,  d_i(old) + |L_p \ i|,
//                |A_i| + |L_p \ i| + sum_{e in E_i, e != p} |L_e \ L_p| ),
// supervariables (indistinguishable variables found by hashing their lists
// and merged, weights |i| = nv[i]) and mass elimination (a variable whose only
// neighbour is the new element p is eliminated together with p).
// Not included: dense-row postponement.
//
// Data structure: one int[] per node. A variable's array holds its element list
// E_i (elen[i] entries) followed by its variable list A_i (len[i] in total);
// an element's array holds L_e. Lists shrink in place (a variable never gains
// more entries than it loses at one pivot); stale entries (absorbed elements,
// merged or eliminated variables) are skipped and pruned lazily.
//
// Takes: a valid SymmetricPattern. Returns: perm with perm[k] = original index
// eliminated k-th. Deterministic: ties are broken by fixed list order only.

namespace PathService.Engine.Sparse;

internal static class ApproximateMinimumDegree
{
    /// <summary>Computes the AMD permutation of the pattern's adjacency graph.</summary>
    public static int[] Order(SymmetricPattern pattern) => new Quotient(pattern).Run();

    private const byte Variable = 0, Element = 1, Absorbed = 2, Merged = 3, Eliminated = 4;

    private sealed class Quotient
    {
        private readonly int n;
        private readonly int[][] adj;           // E_i then A_i (variables), or L_e (elements)
        private readonly int[] len, elen;       // list length, number of leading elements
        private readonly int[] nv;              // supervariable weight |i|
        private readonly byte[] kind;
        private readonly int[] degree;          // variables: approximate external degree; elements: |L_e|
        private readonly int[] head, next, prev; // degree buckets
        private readonly long[] w;              // w[e] - wflg = |L_e \ L_p|
        private long wflg;
        private readonly int[] lpStamp;         // lpStamp[i] == step  <=>  i in L_p
        private int step;
        private readonly int[] cmpMark;         // set-equality marks for supervariable detection
        private int cmpStamp;
        private readonly int[] lp, scratch, partialDeg, hashHead, hashNext;
        private readonly uint[] hash;
        private readonly int[] memberNext, memberTail, order;
        private int ordered, remaining, minDeg;

        public Quotient(SymmetricPattern pattern)
        {
            n = pattern.Size;
            adj = new int[n][];
            len = new int[n]; elen = new int[n]; nv = new int[n]; kind = new byte[n];
            degree = new int[n]; head = new int[n + 1]; next = new int[n]; prev = new int[n];
            w = new long[n]; lpStamp = new int[n]; cmpMark = new int[n];
            lp = new int[n]; scratch = new int[n]; partialDeg = new int[n];
            hashHead = new int[n]; hashNext = new int[n]; hash = new uint[n];
            memberNext = new int[n]; memberTail = new int[n]; order = new int[n];
            Array.Fill(head, -1); Array.Fill(hashHead, -1); Array.Fill(lpStamp, -1);
            Array.Fill(cmpMark, -1); Array.Fill(memberNext, -1);

            // Degree of each vertex in the graph of A (off-diagonal entries, both triangles).
            int[] cp = pattern.ColumnPointers, ri = pattern.RowIndices;
            for (int j = 0; j < n; j++)
                for (int q = cp[j]; q < cp[j + 1]; q++)
                    if (ri[q] != j) { len[ri[q]]++; len[j]++; }

            // A_i = adjacency of i; every vertex is a variable of weight 1.
            for (int i = 0; i < n; i++) { adj[i] = new int[len[i]]; len[i] = 0; nv[i] = 1; memberTail[i] = i; }
            for (int j = 0; j < n; j++)
                for (int q = cp[j]; q < cp[j + 1]; q++)
                {
                    int i = ri[q];
                    if (i == j) continue;
                    adj[i][len[i]++] = j;
                    adj[j][len[j]++] = i;
                }

            // Initial degree buckets d_i = |A_i|.
            for (int i = n - 1; i >= 0; i--) { degree[i] = len[i]; Insert(i, len[i]); }
            remaining = n;
        }

        public int[] Run()
        {
            // Eliminate a minimum-degree supervariable until every variable is ordered.
            while (ordered < n)
            {
                while (head[minDeg] == -1) minDeg++;
                int p = head[minDeg];
                Remove(p);
                Eliminate(p);
            }
            return order;
        }

        private void Insert(int i, int d)
        {
            degree[i] = d;
            prev[i] = -1;
            next[i] = head[d];
            if (head[d] != -1) prev[head[d]] = i;
            head[d] = i;
            if (d < minDeg) minDeg = d;
        }

        private void Remove(int i)
        {
            if (prev[i] != -1) next[prev[i]] = next[i]; else head[degree[i]] = next[i];
            if (next[i] != -1) prev[next[i]] = prev[i];
        }

        private void Emit(int i)
        {
            // Every original variable represented by supervariable i takes the next positions.
            for (int v = i; v != -1; v = memberNext[v]) order[ordered++] = v;
        }

        private int lpCount, degme;

        private void AddToLp(int v)
        {
            if (kind[v] != Variable || lpStamp[v] == step) return;
            lpStamp[v] = step;
            lp[lpCount++] = v;
            degme += nv[v];
            Remove(v);
        }

        private void Eliminate(int p)
        {
            step++;
            lpStamp[p] = step;
            lpCount = 0; degme = 0;
            remaining -= nv[p];

            // L_p = A_p  union  (union of L_e over e in E_p); each e in E_p is absorbed into p.
            int[] listP = adj[p];
            for (int t = 0; t < len[p]; t++)
            {
                int x = listP[t];
                if (t >= elen[p]) { AddToLp(x); continue; }
                if (kind[x] != Element) continue;
                int[] le = adj[x];
                for (int s = 0; s < len[x]; s++) AddToLp(le[s]);
                kind[x] = Absorbed; adj[x] = null!;
            }
            kind[p] = Element;
            Emit(p);

            ComputeExternalSizes();
            UpdateLpVariables(p);
            DetectSupervariables();
            FinishDegrees(p);
        }

        private void ComputeExternalSizes()
        {
            // w(e) = |L_e| - sum_{i in L_p cap L_e} |i| = |L_e \ L_p| for every element e touching L_p.
            wflg += n + 1;
            for (int k = 0; k < lpCount; k++)
            {
                int i = lp[k];
                int[] li = adj[i];
                for (int t = 0; t < elen[i]; t++)
                {
                    int e = li[t];
                    if (kind[e] != Element) continue;
                    if (w[e] < wflg) w[e] = wflg + degree[e];
                    w[e] -= nv[i];
                }
            }
        }

        private void UpdateLpVariables(int p)
        {
            // For each i in L_p: E_i <- {p} + live elements not inside L_p; A_i <- A_i \ L_p;
            // partial degree |A_i| + sum |L_e \ L_p|; hash of the new lists; mass elimination.
            for (int k = 0; k < lpCount; k++)
            {
                int i = lp[k];
                int[] li = adj[i];
                int cnt = 0, deg = 0;
                uint h = (uint)p;
                scratch[cnt++] = p;
                // Elements of i: absorbed ones dropped, those with L_e inside L_p absorbed into p (aggressive).
                for (int t = 0; t < elen[i]; t++)
                {
                    int e = li[t];
                    if (kind[e] != Element) continue;
                    long we = w[e] - wflg;
                    if (we == 0) { kind[e] = Absorbed; adj[e] = null!; continue; }
                    scratch[cnt++] = e; deg += (int)we; h += (uint)e;
                }
                int newElen = cnt;
                // Variables of i outside L_p (those inside are now reached through p).
                for (int t = elen[i]; t < len[i]; t++)
                {
                    int j = li[t];
                    if (kind[j] != Variable || lpStamp[j] == step) continue;
                    scratch[cnt++] = j; deg += nv[j]; h += (uint)j;
                }

                if (cnt == 1)
                {
                    // Adj(i) = L_p \ i: i is eliminated with p at no extra fill (mass elimination).
                    kind[i] = Eliminated; adj[i] = null!;
                    degme -= nv[i]; remaining -= nv[i]; nv[i] = 0;
                    Emit(i);
                    continue;
                }

                if (cnt > li.Length) { li = new int[cnt]; adj[i] = li; }
                Array.Copy(scratch, li, cnt);
                len[i] = cnt; elen[i] = newElen;
                partialDeg[i] = deg;
                hash[i] = h;
                int b = (int)(h % (uint)n);
                hashNext[i] = hashHead[b]; hashHead[b] = i;
            }
        }

        private void DetectSupervariables()
        {
            // Variables of L_p with identical lists E_i and A_i are indistinguishable: merge them.
            for (int k = 0; k < lpCount; k++)
            {
                int i = lp[k];
                if (kind[i] != Variable) continue;
                int b = (int)(hash[i] % (uint)n);
                if (hashHead[b] == -1) continue;
                // Compare every pair (a, c) in this hash bucket.
                for (int a = hashHead[b]; a != -1; a = hashNext[a])
                {
                    if (kind[a] != Variable) continue;
                    cmpStamp++;
                    int[] la = adj[a];
                    for (int t = 0; t < len[a]; t++) cmpMark[la[t]] = cmpStamp;
                    for (int c = hashNext[a]; c != -1; c = hashNext[c])
                    {
                        if (kind[c] != Variable || hash[c] != hash[a] || len[c] != len[a] || elen[c] != elen[a]) continue;
                        int[] lc = adj[c];
                        bool same = true;
                        for (int t = 0; t < len[c] && same; t++) same = cmpMark[lc[t]] == cmpStamp;
                        if (!same) continue;
                        // c joins supervariable a: |a| += |c|, c's members follow a's.
                        nv[a] += nv[c]; nv[c] = 0;
                        kind[c] = Merged; adj[c] = null!;
                        memberNext[memberTail[a]] = c; memberTail[a] = memberTail[c];
                    }
                }
                hashHead[b] = -1;
            }
        }

        private void FinishDegrees(int p)
        {
            // d_i = min(n_remaining - |i|, d_i(old) + |L_p \ i|, partial_i + |L_p \ i|); L_p compacted.
            int kept = 0;
            for (int k = 0; k < lpCount; k++)
            {
                int i = lp[k];
                if (kind[i] != Variable) continue;
                int external = degme - nv[i];
                int d = Math.Min(degree[i], partialDeg[i]) + external;
                d = Math.Max(0, Math.Min(d, remaining - nv[i]));
                Insert(i, d);
                lp[kept++] = i;
            }

            if (kept == 0) { kind[p] = Absorbed; adj[p] = null!; return; }
            int[] le = adj[p];
            if (le.Length < kept) { le = new int[kept]; adj[p] = le; }
            Array.Copy(lp, le, kept);
            len[p] = kept; elen[p] = 0;
            degree[p] = degme;
        }
    }
}
