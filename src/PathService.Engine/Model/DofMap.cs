namespace PathService.Engine.Model;

/// <summary>
/// Numbering of the degrees of freedom. Each node has 3 unknowns (translations x, y, z) or 6 (then also the rotations
/// about x, y, z), stored consecutively from <see cref="Offset"/>: the full index of (node, axis) is Offset[node] + axis.
/// The rule: a node has rotations iff a beam end holding at least one rotation connects to it (intermediate nodes of a
/// subdivided beam always do); bars, springs and fully released beam ends transmit forces only. With no rotating node
/// the layout is the plain 3·node + axis.
/// The free unknowns (not restrained by a support) are numbered 0..FreeCount-1 in full order. Restrained directions are
/// dropped from the equations; their prescribed values stay in the full vector.
/// </summary>
public sealed class DofMap
{
    /// <summary>Free equation number of each full DOF, or -1 when the direction is restrained.</summary>
    public int[] EquationOf { get; }

    /// <summary>Full DOF index of each free equation.</summary>
    public int[] FullOf { get; }

    /// <summary>First full DOF of each node (its x translation); Offset[NodeCount] = FullCount.</summary>
    public int[] Offset { get; }

    /// <summary>The node of each full DOF.</summary>
    public int[] NodeOf { get; }

    /// <summary>Full index of the first rotation (about x) of each rotating node, in node order.</summary>
    public int[] RotationStarts { get; }

    public int FullCount => EquationOf.Length;
    public int FreeCount => FullOf.Length;
    public int NodeCount => Offset.Length - 1;
    /// <summary>Whether any node carries rotations (then updates of the configuration compose rotations).</summary>
    public bool HasRotations => RotationStarts.Length > 0;

    /// <summary>Three translations per node, no rotations.</summary>
    public DofMap(int nodeCount, IReadOnlyCollection<int> restrainedFullDofs) : this(new bool[nodeCount], restrainedFullDofs) { }

    /// <param name="rotating">Per node, whether it carries rotations.</param>
    /// <param name="restrainedFullDofs">Full indices (in this map's layout) of the restrained directions.</param>
    public DofMap(bool[] rotating, IReadOnlyCollection<int> restrainedFullDofs)
    {
        int nodeCount = rotating.Length;
        Offset = new int[nodeCount + 1];
        var starts = new List<int>();
        for (int n = 0; n < nodeCount; n++)
        {
            if (rotating[n]) starts.Add(Offset[n] + 3);
            Offset[n + 1] = Offset[n] + (rotating[n] ? 6 : 3);
        }
        RotationStarts = starts.ToArray();
        NodeOf = new int[Offset[nodeCount]];
        for (int n = 0; n < nodeCount; n++)
            for (int d = Offset[n]; d < Offset[n + 1]; d++) NodeOf[d] = n;
        EquationOf = new int[Offset[nodeCount]];
        foreach (int d in restrainedFullDofs) EquationOf[d] = -1;
        var free = new List<int>(EquationOf.Length);
        for (int d = 0; d < EquationOf.Length; d++)
        {
            if (EquationOf[d] == -1) continue;
            EquationOf[d] = free.Count;
            free.Add(d);
        }
        FullOf = free.ToArray();
    }

    /// <summary>Number of unknowns of a node: 3 or 6.</summary>
    public int Size(int node) => Offset[node + 1] - Offset[node];

    /// <summary>Whether a node carries rotations.</summary>
    public bool Rotates(int node) => Offset[node + 1] - Offset[node] == 6;

    /// <summary>Whether (node, axis) exists: translations always, rotations only at rotating nodes.</summary>
    public bool Has(int node, Axis axis) => (int)axis >= 0 && (int)axis < Size(node);

    /// <summary>Full index of (node, axis); the axis must exist at the node (<see cref="Has"/>).</summary>
    public int Full(int node, Axis axis) => Offset[node] + (int)axis;

    /// <summary>Node and direction of a full DOF index.</summary>
    public (int Node, Axis Direction) Describe(int fullDof) => (NodeOf[fullDof], (Axis)(fullDof - Offset[NodeOf[fullDof]]));

    /// <summary>Copies the free entries of a full vector into a free vector.</summary>
    public void Gather(ReadOnlySpan<double> full, Span<double> free)
    {
        for (int e = 0; e < FullOf.Length; e++) free[e] = full[FullOf[e]];
    }

    /// <summary>Writes a free vector into the free entries of a full vector, leaving restrained entries alone.</summary>
    public void Scatter(ReadOnlySpan<double> free, Span<double> full)
    {
        for (int e = 0; e < FullOf.Length; e++) full[FullOf[e]] = free[e];
    }

    /// <summary>The three translations of a node from a full vector.</summary>
    public (double X, double Y, double Z) Translation(ReadOnlySpan<double> full, int node)
    {
        int o = Offset[node];
        return (full[o], full[o + 1], full[o + 2]);
    }
}
