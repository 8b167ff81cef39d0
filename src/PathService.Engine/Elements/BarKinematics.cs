namespace PathService.Engine.Elements;

/// <summary>
/// Total Lagrangian pin-ended bar (see e.g. M. A. Crisfield, "Non-linear Finite Element Analysis of Solids and
/// Structures", Vol. 1, Wiley 1991, ch. 3 (from memory); K.-J. Bathe, "Finite Element Procedures", 1996, §6.3 (from memory)).
///
/// With the initial chord X = X_j − X_i, L0 = |X| and the current chord x = X + u_j − u_i:
///   Green-Lagrange strain  ε = (x·x − L0²) / (2 L0²)
///   2nd Piola-Kirchhoff    S = E ε + S0            (S0: initial stress, tension positive)
///   internal force         f = (A0 S / L0) [−x; x]
///   consistent tangent     K = (E A0 / L0³) [x xᵀ, −x xᵀ; −x xᵀ, x xᵀ] + (S A0 / L0) [I, −I; −I, I]
/// The first part is the material stiffness (with the initial-displacement effect, since it uses x, not X);
/// the second is the geometric (initial-stress) stiffness, softening in compression and stiffening in tension.
/// The tangent is the exact derivative of f, which gives Newton's method its quadratic convergence.
/// </summary>
public static class BarKinematics
{
    /// <summary>State of one bar at a displacement state; the tangent modulus and plastic strain come from its material law.</summary>
    public readonly record struct BarState(double Dx, double Dy, double Dz, double Strain, double Stress,
        double TangentModulus, double PlasticStrain = 0, BarRegime Regime = BarRegime.Elastic)
    {
        /// <summary>Current length ℓ = |x|.</summary>
        public double CurrentLength => Math.Sqrt(Dx * Dx + Dy * Dy + Dz * Dz);
    }

    /// <summary>Current chord, strain and stress of a bar from its end displacements.</summary>
    public static BarState Evaluate(ReadOnlySpan<double> coordinates, ReadOnlySpan<double> displacement,
        int i, int j, double length0, double modulus, double initialStress) =>
        Evaluate(coordinates, displacement, 3 * i, 3 * j, 3 * i, 3 * j, modulus, initialStress);

    /// <summary>
    /// Current chord, strain and stress of a bar whose end coordinates start at <paramref name="ca"/>, <paramref name="cb"/>
    /// (3 per node) and whose end translations start at <paramref name="da"/>, <paramref name="db"/> (the nodes' offsets in
    /// the <see cref="Model.DofMap"/>: equal to the coordinate offsets when no node rotates).
    /// </summary>
    public static BarState Evaluate(ReadOnlySpan<double> coordinates, ReadOnlySpan<double> displacement,
        int ca, int cb, int da, int db, double modulus, double initialStress)
    {
        int a = ca, b = cb;
        double X = coordinates[b] - coordinates[a], Y = coordinates[b + 1] - coordinates[a + 1], Z = coordinates[b + 2] - coordinates[a + 2];
        a = da; b = db;
        double ux = displacement[b] - displacement[a], uy = displacement[b + 1] - displacement[a + 1], uz = displacement[b + 2] - displacement[a + 2];
        // ε = (x·x − X·X)/(2X·X) evaluated as (2X·Δu + Δu·Δu)/(2X·X): exactly zero at Δu = 0 and free of the
        // cancellation of two nearly equal squared lengths for small strains.
        double l2 = X * X + Y * Y + Z * Z;
        double strain = (2 * (X * ux + Y * uy + Z * uz) + ux * ux + uy * uy + uz * uz) / (2 * l2);
        return new BarState(X + ux, Y + uy, Z + uz, strain, modulus * strain + initialStress, modulus);
    }

    /// <summary>
    /// State of bar <paramref name="bar"/> of a model, with its material law applied (<see cref="BarMaterial"/>) from the
    /// committed plastic strain.
    /// </summary>
    public static BarState Evaluate(Model.StructuralModel m, ReadOnlySpan<double> displacement, int bar, double committedPlasticStrain)
    {
        int i = m.BarStart[bar], j = m.BarEnd[bar];
        var s = Evaluate(m.Coordinates, displacement, 3 * i, 3 * j, m.Dofs.Offset[i], m.Dofs.Offset[j], m.BarModulus[bar], m.BarInitialStress[bar]);
        if (!m.HasMemberLaws) return s;
        var (stress, et, ep, regime) = BarMaterial.Respond(m.BarBehavior[bar], m.BarModulus[bar], m.BarInitialStress[bar], m.BarYieldStress[bar], s.Strain, committedPlasticStrain);
        return s with { Stress = stress, TangentModulus = et, PlasticStrain = ep, Regime = regime };
    }

    /// <summary>
    /// Axial force in the deformed bar, N = A0 S ℓ / L0: the magnitude of the nodal forces along the current chord
    /// (tension positive). This is the member force that equilibrates the joints and the reactions.
    /// </summary>
    public static double AxialForce(in BarState s, double area0, double length0) => area0 * s.Stress * s.CurrentLength / length0;

    /// <summary>Adds the bar's internal force f = (A0 S/L0)[−x; x] to a full force vector.</summary>
    public static void AddInternalForce(in BarState s, double area0, double length0, int i, int j, Span<double> force)
    {
        double c = area0 * s.Stress / length0;
        int a = 3 * i, b = 3 * j;
        force[a] -= c * s.Dx; force[a + 1] -= c * s.Dy; force[a + 2] -= c * s.Dz;
        force[b] += c * s.Dx; force[b + 1] += c * s.Dy; force[b + 2] += c * s.Dz;
    }

    /// <summary>
    /// The 3×3 block k of the tangent, K = [k, −k; −k, k]: k = (E A0/L0³) x xᵀ (+ optional) (S A0/L0) I.
    /// Writes the 6 distinct entries of the symmetric block in the order xx, xy, xz, yy, yz, zz.
    /// </summary>
    public static void TangentBlock(in BarState s, double modulus, double area0, double length0, bool includeGeometric, Span<double> k6)
    {
        double m = modulus * area0 / (length0 * length0 * length0);
        double g = includeGeometric ? s.Stress * area0 / length0 : 0.0;
        k6[0] = m * s.Dx * s.Dx + g;
        k6[1] = m * s.Dx * s.Dy;
        k6[2] = m * s.Dx * s.Dz;
        k6[3] = m * s.Dy * s.Dy + g;
        k6[4] = m * s.Dy * s.Dz;
        k6[5] = m * s.Dz * s.Dz + g;
    }

    /// <summary>Index into the 6-entry symmetric block for row/column directions p, q in 0..2.</summary>
    public static int BlockEntry(int p, int q)
    {
        if (p > q) (p, q) = (q, p);
        return p switch { 0 => q, 1 => 2 + q, _ => 5 };
    }
}
