namespace PathService.Engine.Elements;

/// <summary>Elastic section of a beam: moduli E and G, area A, second moments I_y, I_z about the local axes, torsion constant J.</summary>
public readonly record struct BeamSection(double E, double G, double A, double Iy, double Iz, double J);

/// <summary>
/// Which end moments a beam element does not transmit (a hinge on that axis at that end): torsion, bending about local y,
/// bending about local z, at the start and at the end node. All false is a rigidly connected beam; all true a bar.
/// </summary>
public readonly record struct BeamReleases(bool StartTorsion, bool StartBendingY, bool StartBendingZ,
    bool EndTorsion, bool EndBendingY, bool EndBendingZ)
{
    /// <summary>Both ends rigid.</summary>
    public static BeamReleases None => default;
    /// <summary>Every rotation released at both ends: the element carries axial force only.</summary>
    public static BeamReleases All => new(true, true, true, true, true, true);
}

/// <summary>
/// The local (corotated) stiffness of a linear elastic Euler–Bernoulli beam of length L with respect to the seven
/// deformational unknowns p = [ū, θ̄₁ₓ, θ̄₁ᵧ, θ̄₁𝓏, θ̄₂ₓ, θ̄₂ᵧ, θ̄₂𝓏]: the elongation and the end rotations relative to the
/// element frame (J. S. Przemieniecki, "Theory of Matrix Structural Analysis", McGraw-Hill 1968, ch. 5 (from memory),
/// with the rigid-body modes removed):
///   N = (EA/L) ū,   T = (GJ/L)(θ̄₂ₓ − θ̄₁ₓ),   [M₁; M₂] = (EI/L)[4 2; 2 4][θ̄₁; θ̄₂] about y (I_y) and about z (I_z).
/// A released end moment is condensed out (static condensation, K_rr − K_rc K_cc⁻¹ K_cr, which is exact for a linear
/// element): the four actions (axial, torsion, bending y, bending z) are uncoupled, so each 2×2 block is condensed on its
/// own — one end released in bending leaves 3EI/L at the other end (the propped beam), both ends released leave nothing,
/// and torsion released at either end leaves no torsional stiffness.
/// </summary>
public static class BeamLocalStiffness
{
    /// <summary>Number of local deformational unknowns.</summary>
    public const int Size = 7;

    /// <summary>Writes the condensed 7×7 local stiffness (row-major) into <paramref name="k"/>.</summary>
    public static void Build(in BeamSection s, double length, in BeamReleases rel, Span<double> k)
    {
        k[..(Size * Size)].Clear();
        k[0] = s.E * s.A / length;
        if (!rel.StartTorsion && !rel.EndTorsion)
        {
            double t = s.G * s.J / length;
            k[1 * Size + 1] = t; k[4 * Size + 4] = t; k[1 * Size + 4] = -t; k[4 * Size + 1] = -t;
        }
        Bending(s.E * s.Iy / length, rel.StartBendingY, rel.EndBendingY, 2, 5, k);
        Bending(s.E * s.Iz / length, rel.StartBendingZ, rel.EndBendingZ, 3, 6, k);
    }

    private static void Bending(double ei, bool startReleased, bool endReleased, int a, int b, Span<double> k)
    {
        if (startReleased && endReleased) return;
        if (startReleased) { k[b * Size + b] = 3 * ei; return; }
        if (endReleased) { k[a * Size + a] = 3 * ei; return; }
        k[a * Size + a] = 4 * ei; k[b * Size + b] = 4 * ei;
        k[a * Size + b] = 2 * ei; k[b * Size + a] = 2 * ei;
    }
}
