namespace PathService.Engine.Model;

/// <summary>
/// Numbering of the degrees of freedom: three translations per node in the full vector
/// (index 3·node + axis), and the free ones (not restrained by a support) numbered 0..FreeCount-1
/// in node order. Restrained directions are dropped from the equations; their prescribed values
/// stay in the full displacement vector.
/// </summary>
public sealed class DofMap
{
    /// <summary>Free equation number of each full DOF, or -1 when the direction is restrained.</summary>
    public int[] EquationOf { get; }

    /// <summary>Full DOF index of each free equation.</summary>
    public int[] FullOf { get; }

    public int FullCount => EquationOf.Length;
    public int FreeCount => FullOf.Length;

    public DofMap(int nodeCount, IReadOnlyCollection<int> restrainedFullDofs)
    {
        EquationOf = new int[3 * nodeCount];
        foreach (int d in restrainedFullDofs) EquationOf[d] = -1;
        var free = new List<int>(3 * nodeCount);
        for (int d = 0; d < EquationOf.Length; d++)
        {
            if (EquationOf[d] == -1) continue;
            EquationOf[d] = free.Count;
            free.Add(d);
        }
        FullOf = free.ToArray();
    }

    public static int Full(int node, Axis axis) => 3 * node + (int)axis;

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
}
