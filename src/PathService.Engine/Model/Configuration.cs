namespace PathService.Engine.Model;

/// <summary>
/// The configuration of the structure as one full vector in the layout of the <see cref="DofMap"/>: the translations of
/// every node (displacements from the initial position, additive) and, at rotating nodes, the rotation vector ψ of the
/// nodal rotation R = exp(ψ̂) from the initial triad. Every change of state goes through <see cref="Advance"/>:
/// translations add, rotations compose, R ← exp(Δθ̂)·R with the spatial spin Δθ that the equations solve for
/// (Argyris 1982; Simo and Vu-Quoc 1986; theory §"Element abstraction and rotation updates"). Without rotating nodes it is
/// exactly the loop full[d] += scale·δ[e] that it replaced, so bar-only results are bit-identical.
/// Linear combinations of two configurations (a bracket's interpolation, a mid-state) treat ψ as a vector: a first-order
/// approximation of the rotation between them that only serves as a predictor or probe; equilibrium states always come
/// from <see cref="Advance"/>.
/// </summary>
public static class Configuration
{
    /// <summary>full ← full ⊕ scale·δ over the free unknowns (δ a free vector: translations and spatial spins).</summary>
    public static void Advance(DofMap map, Span<double> full, ReadOnlySpan<double> delta, double scale = 1.0)
    {
        var fullOf = map.FullOf;
        int count = fullOf.Length;
        if (!map.HasRotations)
        {
            for (int e = 0; e < count; e++) full[fullOf[e]] += scale * delta[e];
            return;
        }
        var offset = map.Offset;
        var nodeOf = map.NodeOf;
        for (int e = 0; e < count; e++)
        {
            int d = fullOf[e];
            if (d - offset[nodeOf[d]] < 3) full[d] += scale * delta[e];
        }
        var eq = map.EquationOf;
        foreach (int r in map.RotationStarts)
        {
            int ex = eq[r], ey = eq[r + 1], ez = eq[r + 2];
            if (ex < 0 && ey < 0 && ez < 0) continue; // all three held: the rotation stays as prescribed
            double sx = ex >= 0 ? scale * delta[ex] : 0.0, sy = ey >= 0 ? scale * delta[ey] : 0.0, sz = ez >= 0 ? scale * delta[ez] : 0.0;
            Elements.RotationVector.Compose(full.Slice(r, 3), sx, sy, sz);
        }
    }
}
