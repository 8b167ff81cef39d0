namespace PathService.Engine.Stability;

/// <summary>How a critical load's derivative was obtained.</summary>
public enum SensitivityMethod
{
    /// <summary>Limit point: dλ_c/dp = φᵀ∂r/∂p / (φᵀF_ref), from the null vector alone.</summary>
    LimitPoint,
    /// <summary>Bifurcation: the derivative of the load factor at which the tangent's eigenvalue along the critical mode
    /// (the mean over the modes of a multiple point) reaches zero on the fundamental path; one adjoint solve.</summary>
    ZeroEigenvalue,
}

/// <summary>
/// Derivatives of a critical load factor λ_c with respect to the design, in model order. Units: per unit of the
/// parameter (area: 1/length², modulus: length²/force, coordinates: 1/length, spring stiffness: length/force); volume:
/// 1/length³. When <see cref="Defined"/> is false every array is empty and <see cref="Note"/> says why.
/// </summary>
/// <param name="BarVolume">dλ_c/dV of each bar's material volume V = A·L0 at fixed geometry: (dλ_c/dA)/L0. The member
/// where added material raises λ_c most is the one with the largest value.</param>
/// <param name="NodeCoordinates">dλ_c/dx, dy, dz of the initial coordinates, 3 per node (supported nodes too: moving a
/// support moves the structure).</param>
/// <param name="Breaking">Parameters (as "bar:id:area", "node:id:y", ...) whose change breaks the symmetry that the
/// bifurcation rests on (the critical mode does work against their residual change): for them the bifurcation turns
/// into a limit point or disappears, the derivative reported is that of the perfect structure's bifurcation, and the
/// drop is governed by imperfection sensitivity instead.</param>
public sealed record CriticalLoadSensitivity(
    bool Defined, string Note, SensitivityMethod Method, int Multiplicity,
    double[] BarArea, double[] BarModulus, double[] BarVolume, double[] NodeCoordinates,
    double[] GroundSpringStiffness, double[] LinkSpringStiffness, IReadOnlyList<string> Breaking)
{
    public static CriticalLoadSensitivity Undefined(SensitivityMethod method, int multiplicity, string note) =>
        new(false, note, method, multiplicity, [], [], [], [], [], [], []);

    /// <summary>
    /// The derivative of λ_c along a design direction: Σ ∂λ_c/∂p · d_p over the parameters the direction gives (arrays
    /// in model order; null = not part of the direction). Throws when an array's length does not match the model.
    /// </summary>
    public double Directional(DesignDirection d)
    {
        if (!Defined) throw new InvalidOperationException($"the sensitivity is not defined: {Note}");
        return Dot(BarArea, d.BarArea, "bar areas") + Dot(BarModulus, d.BarModulus, "bar moduli") + Dot(NodeCoordinates, d.NodeCoordinates, "node coordinates")
               + Dot(GroundSpringStiffness, d.GroundSpringStiffness, "ground springs") + Dot(LinkSpringStiffness, d.LinkSpringStiffness, "link springs");
    }

    private static double Dot(double[] g, double[]? d, string what)
    {
        if (d is null) return 0;
        if (d.Length != g.Length) throw new ArgumentException($"the design direction gives {d.Length} values for {what}; the model has {g.Length}");
        double s = 0;
        for (int i = 0; i < g.Length; i++) s += g[i] * d[i];
        return s;
    }
}

/// <summary>A change of the design, per parameter, in model order (3 per node for coordinates); null parts are zero.</summary>
public sealed record DesignDirection(
    double[]? BarArea = null, double[]? BarModulus = null, double[]? NodeCoordinates = null,
    double[]? GroundSpringStiffness = null, double[]? LinkSpringStiffness = null);
