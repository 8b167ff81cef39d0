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
/// <param name="Breaks">At a bifurcation, the parameters whose change breaks the symmetry the bifurcation rests on (the
/// critical mode does work against their residual change): for them the bifurcation turns into a limit point or
/// disappears, the derivative reported is that of the perfect structure's bifurcation, and the drop is governed by
/// imperfection sensitivity instead. All false at a limit point.</param>
public sealed record CriticalLoadSensitivity(
    bool Defined, string Note, SensitivityMethod Method, int Multiplicity,
    double[] BarArea, double[] BarModulus, double[] BarVolume, double[] NodeCoordinates,
    double[] GroundSpringStiffness, double[] LinkSpringStiffness, SymmetryBreaks Breaks)
{
    public static CriticalLoadSensitivity Undefined(SensitivityMethod method, int multiplicity, string note) =>
        new(false, note, method, multiplicity, [], [], [], [], [], [], new SymmetryBreaks([], [], [], []));

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

/// <summary>
/// Which parameters break a bifurcation, in model order: per bar (its area and modulus change its force along the same
/// chord, so both or neither), per node the axes along which moving it breaks it ("x", "xz", … or ""), per spring.
/// </summary>
public sealed record SymmetryBreaks(bool[] Bars, string[] NodeAxes, bool[] GroundSprings, bool[] LinkSprings)
{
    /// <summary>Number of breaking parameters (node axes counted one by one).</summary>
    public int Count => Bars.Count(b => b) + NodeAxes.Sum(a => a.Length) + GroundSprings.Count(b => b) + LinkSprings.Count(b => b);
}

/// <summary>A change of the design, per parameter, in model order (3 per node for coordinates); null parts are zero.</summary>
public sealed record DesignDirection(
    double[]? BarArea = null, double[]? BarModulus = null, double[]? NodeCoordinates = null,
    double[]? GroundSpringStiffness = null, double[]? LinkSpringStiffness = null);

/// <summary>A bar's share of a design change: its area and modulus change by these amounts (per unit of the direction).</summary>
public sealed record BarChange(string Bar, double Area = 0, double Modulus = 0);

/// <summary>A node's share of a design change: its initial coordinates move by (X, Y, Z).</summary>
public sealed record NodeChange(string Node, double X = 0, double Y = 0, double Z = 0);

/// <summary>A spring's share of a design change: its stiffness changes by this amount.</summary>
public sealed record SpringChange(string Spring, double Stiffness);

/// <summary>
/// A design change as a caller names it, by ids (the form the contract carries): parameters not named do not change.
/// <see cref="Resolve"/> turns it into the model-ordered <see cref="DesignDirection"/>.
/// </summary>
public sealed record DesignChanges(
    IReadOnlyList<BarChange>? Bars = null, IReadOnlyList<NodeChange>? Nodes = null,
    IReadOnlyList<SpringChange>? GroundSprings = null, IReadOnlyList<SpringChange>? LinkSprings = null)
{
    /// <summary>The direction in model order; every unknown id (UnknownDesignItem) or non-finite value (NonFiniteNumber) is
    /// reported through <paramref name="error"/> (code, field, message).</summary>
    public DesignDirection Resolve(Model.StructuralModel m, Action<Model.FindingCode, string, string> error)
    {
        var area = new double[m.BarCount];
        var modulus = new double[m.BarCount];
        var coords = new double[3 * m.NodeCount];
        var ground = new double[m.GroundSpringStiffness.Length];
        var link = new double[m.LinkSpringStiffness.Length];
        var barIndex = Index(m.BarIds);
        for (int i = 0; i < (Bars?.Count ?? 0); i++)
        {
            var c = Bars![i];
            string f = $"design_direction.bars[{i}]";
            if (!barIndex.TryGetValue(c.Bar, out int b)) { error(Model.FindingCode.UnknownDesignItem, f + ".bar", $"{f} names bar '{Clip(c.Bar)}', which is not in the model"); continue; }
            if (!double.IsFinite(c.Area) || !double.IsFinite(c.Modulus)) { error(Model.FindingCode.NonFiniteNumber, f, $"{f} ('{Clip(c.Bar)}') has a value that is not finite"); continue; }
            area[b] += c.Area; modulus[b] += c.Modulus;
        }
        for (int i = 0; i < (Nodes?.Count ?? 0); i++)
        {
            var c = Nodes![i];
            string f = $"design_direction.nodes[{i}]";
            if (!m.TryGetNode(c.Node, out int n)) { error(Model.FindingCode.UnknownDesignItem, f + ".node", $"{f} names node '{Clip(c.Node)}', which is not in the model"); continue; }
            if (!double.IsFinite(c.X) || !double.IsFinite(c.Y) || !double.IsFinite(c.Z)) { error(Model.FindingCode.NonFiniteNumber, f, $"{f} ('{Clip(c.Node)}') has a value that is not finite"); continue; }
            coords[3 * n] += c.X; coords[3 * n + 1] += c.Y; coords[3 * n + 2] += c.Z;
        }
        Springs(GroundSprings, Index(m.GroundSpringIds), ground, "ground_springs", error);
        Springs(LinkSprings, Index(m.LinkSpringIds), link, "link_springs", error);
        return new DesignDirection(area, modulus, coords, ground, link);
    }

    private static void Springs(IReadOnlyList<SpringChange>? changes, Dictionary<string, int> index, double[] into, string field, Action<Model.FindingCode, string, string> error)
    {
        for (int i = 0; i < (changes?.Count ?? 0); i++)
        {
            var c = changes![i];
            string f = $"design_direction.{field}[{i}]";
            if (!index.TryGetValue(c.Spring, out int s)) { error(Model.FindingCode.UnknownDesignItem, f + ".spring", $"{f} names spring '{Clip(c.Spring)}', which is not in the model"); continue; }
            if (!double.IsFinite(c.Stiffness)) { error(Model.FindingCode.NonFiniteNumber, f + ".stiffness", $"{f} ('{Clip(c.Spring)}') stiffness is not finite"); continue; }
            into[s] += c.Stiffness;
        }
    }

    private static Dictionary<string, int> Index(string[] ids)
    {
        var d = new Dictionary<string, int>(ids.Length, StringComparer.Ordinal);
        for (int i = 0; i < ids.Length; i++) d.TryAdd(ids[i], i);
        return d;
    }

    /// <summary>Caller strings quoted in messages are cut to 64 characters.</summary>
    private static string Clip(string s) => s.Length <= 64 ? s : s[..64] + "…";
}
