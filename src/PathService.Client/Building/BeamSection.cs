namespace PathService.Client.Building;

/// <summary>
/// Section and material of a beam in the model's units: moduli E and G (force/length²), area A (length²), second
/// moments I_y and I_z about the local axes and torsion constant J (length⁴).
/// </summary>
public sealed record BeamSection(double ElasticModulus, double ShearModulus, double Area, double SecondMomentY, double SecondMomentZ, double TorsionConstant)
{
    /// <summary>
    /// A circular hollow section of outer diameter D = 2R and wall thickness t, r = R − t: A = π(R² − r²),
    /// I_y = I_z = π(R⁴ − r⁴)/4, J = 2I (the polar moment, which is the torsion constant of a circular tube).
    /// </summary>
    public static BeamSection CircularTube(double elasticModulus, double shearModulus, double outerDiameter, double wallThickness)
    {
        if (!(outerDiameter > 0) || !(wallThickness > 0) || wallThickness * 2 > outerDiameter)
            throw new ArgumentException($"a tube needs 0 < wall thickness ≤ D/2 (got D = {outerDiameter}, t = {wallThickness})");
        double outer = outerDiameter / 2, inner = outer - wallThickness;
        double area = Math.PI * (outer * outer - inner * inner);
        double i = Math.PI * (Math.Pow(outer, 4) - Math.Pow(inner, 4)) / 4;
        return new BeamSection(elasticModulus, shearModulus, area, i, i, 2 * i);
    }
}
