namespace PathService.Engine.Elements;

/// <summary>How a bar carries axial force.</summary>
public enum BarBehavior
{
    /// <summary>Tension and compression alike.</summary>
    Elastic,
    /// <summary>
    /// A cable or tie: taut (full axial stiffness) while its stress S ≥ 0, so a brace without prestress stiffens the
    /// structure at rest; slack (zero force and stiffness) only once S &lt; 0, i.e. once it has shortened.
    /// </summary>
    TensionOnly,
    /// <summary>A strut that disengages in tension (e.g. a contact or a slender brace): active while S ≤ 0, disengaged once S &gt; 0.</summary>
    CompressionOnly,
}

/// <summary>The state a bar's material is in at a point of the path.</summary>
public enum BarRegime { Elastic, Yielding, Slack }

/// <summary>
/// One-dimensional material law of a bar in the Total Lagrangian measures (2nd Piola-Kirchhoff stress S against
/// Green-Lagrange strain ε): linear elastic with optional initial stress S0; elastic-perfectly-plastic with the same
/// yield stress σy in tension and compression, by the return map of J. C. Simo and T. J. R. Hughes, "Computational
/// Inelasticity", Springer 1998, §1.2 (from memory) (its consistent tangent modulus is 0 while yielding); and tension-only or
/// compression-only behavior applied on top. A one-sided bar is active on the closed side: tension-only while S ≥ 0,
/// compression-only while S ≤ 0 (at S = 0 the one-sided derivative toward the active side is the tangent, so a brace
/// without prestress stiffens the structure at rest and goes slack only once it has strictly shortened; docs/theory.md
/// §"One-sided members"). Stating plasticity in (S, ε) is adequate for the moderate strains of
/// metal lattices; it is not a finite-strain plasticity model.
/// </summary>
public static class BarMaterial
{
    /// <returns>Stress S, tangent modulus dS/dε, trial plastic strain and regime.</returns>
    public static (double Stress, double TangentModulus, double PlasticStrain, BarRegime Regime) Respond(
        BarBehavior behavior, double modulus, double initialStress, double yieldStress, double strain, double committedPlasticStrain)
    {
        double s = modulus * (strain - committedPlasticStrain) + initialStress;
        double et = modulus, ep = committedPlasticStrain;
        var regime = BarRegime.Elastic;
        // On the surface counts as plastic, so a committed yielding state keeps its plastic tangent for the next step.
        if (yieldStress > 0 && Math.Abs(s) >= yieldStress * (1 - 1e-12))
        {
            // Return map: the stress goes back to the yield surface; the excess strain becomes plastic.
            s = Math.CopySign(yieldStress, s);
            ep = strain - (s - initialStress) / modulus;
            et = 0;
            regime = BarRegime.Yielding;
        }
        if (IsSlack(behavior, s))
            return (0, 0, committedPlasticStrain, BarRegime.Slack);
        return (s, et, ep, regime);
    }

    /// <summary>
    /// The one-sided rule shared by the trace and the linear analysis: slack only on the open side, strictly (a
    /// tension-only bar at S &lt; 0, a compression-only bar at S &gt; 0); at S = 0 the bar is active.
    /// </summary>
    public static bool IsSlack(BarBehavior behavior, double stress) =>
        (behavior == BarBehavior.TensionOnly && stress < 0) || (behavior == BarBehavior.CompressionOnly && stress > 0);
}
