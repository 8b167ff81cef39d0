using PathService.Engine.Assembly;
using PathService.Engine.Model;

namespace PathService.Engine.Analyses;

/// <summary>
/// The beams' part of the small-displacement analyses, taken from the corotational kernel through the element kind so
/// that the linear and the nonlinear analyses share one element: the stiffness at rest K_e(0) (the kernel's tangent in
/// the undeformed configuration, which is the linear 3D frame element; W. McGuire, R. H. Gallagher and R. D. Ziemian,
/// "Matrix Structural Analysis", 2000, ch. 4, from memory), the linear internal force K_e(0)·u_e, the linear member-end
/// actions, and the geometric stiffness of a linear state: for beams the directional derivative of the tangent,
/// K_G[u] = [K_T(h u) − K_T(−h u)]/(2h) (central difference; theory §15.1 "Linear analyses with beams"), for bars their
/// explicit stress block as in a model without beams.
/// </summary>
internal sealed class BeamLinearTerms
{
    /// <summary>Relative size of the finite-difference step: the largest translation of h·u is this fraction of the
    /// model's extent, or its largest rotation this many radians. The tangent is smooth at rest, so the central difference
    /// errs by O(δ²) and its rounding by about 10⁻¹⁶/δ of the element stiffness (measured on the Euler columns of
    /// LinearBeamVerificationTests: δ = 10⁻⁵ reproduces the trace's bifurcations to the trace's own location error).</summary>
    internal const double StepFraction = 1e-5;

    private readonly StructuralModel _m;
    private readonly StructureAssembler _asm;
    private readonly double[] _rest; // 78 upper-triangle entries per element (row-major upper 12×12)
    private readonly double _extent;

    public BeamLinearTerms(StructuralModel model, StructureAssembler assembler)
    {
        _m = model;
        _asm = assembler;
        int count = model.Beams.Count;
        _rest = new double[78 * count];
        assembler.Beams.Tangents(0, count, new double[model.Dofs.FullCount], TangentParts.Consistent, default, _rest);
        double ext = 0;
        for (int c = 0; c < 3; c++)
        {
            double lo = double.PositiveInfinity, hi = double.NegativeInfinity;
            for (int n = 0; n < model.NodeCount; n++) { lo = Math.Min(lo, model.Coordinates[3 * n + c]); hi = Math.Max(hi, model.Coordinates[3 * n + c]); }
            ext = Math.Max(ext, hi - lo);
        }
        _extent = ext > 0 ? ext : 1.0;
    }

    /// <summary>f += K_e(0)·u_e over all beams (u a full vector in the DofMap layout; rotation components as spins).</summary>
    public void AddInternalForce(ReadOnlySpan<double> u, Span<double> f)
    {
        var kind = _asm.Beams;
        var map = _m.Dofs;
        Span<int> dof = stackalloc int[12];
        Span<double> ue = stackalloc double[12];
        for (int e = 0; e < kind.Count; e++)
        {
            for (int l = 0; l < 12; l++) { dof[l] = kind.FullDof(map, e, l); ue[l] = dof[l] >= 0 ? u[dof[l]] : 0.0; }
            var k = _rest.AsSpan(78 * e, 78);
            int t = 0;
            for (int r = 0; r < 12; r++)
                for (int c = r; c < 12; c++, t++)
                {
                    double v = k[t];
                    if (dof[r] >= 0) f[dof[r]] += v * ue[c];
                    if (c != r && dof[c] >= 0) f[dof[c]] += v * ue[r];
                }
        }
    }

    /// <summary>Step h such that h·u is small in the sense of <see cref="StepFraction"/>; 0 when u is zero.</summary>
    public double Step(ReadOnlySpan<double> u)
    {
        var map = _m.Dofs;
        double s = 0;
        for (int d = 0; d < u.Length; d++)
        {
            bool rotation = d - map.Offset[map.NodeOf[d]] >= 3;
            s = Math.Max(s, Math.Abs(u[d]) / (rotation ? 1.0 : _extent));
        }
        return s > 0 ? StepFraction / s : 0.0;
    }

    /// <summary>Linear member-end actions (12 per beam, in the element's local axes, as <see cref="Continuation.StructureState.BeamEndForces"/>):
    /// the central difference of the kernel's end actions along u, which are zero at rest.</summary>
    public double[] EndForces(ReadOnlySpan<double> u)
    {
        int count = _m.Beams.Count;
        var result = new double[12 * count];
        double h = Step(u);
        if (h == 0) return result;
        var plus = Scaled(u, h);
        var minus = Scaled(u, -h);
        Span<double> a = stackalloc double[12];
        Span<double> b = stackalloc double[12];
        for (int e = 0; e < count; e++)
        {
            _asm.Beams.EndForces(e, plus, a);
            _asm.Beams.EndForces(e, minus, b);
            for (int l = 0; l < 12; l++) result[12 * e + l] = (a[l] - b[l]) / (2 * h);
        }
        return result;
    }

    /// <summary>
    /// values ← geometric stiffness of the linear state u on the free pattern: for the beams [K_T(h u) − K_T(−h u)]/(2h),
    /// the change of their tangent per unit of u; for the bars their explicit S·A/L0 block with the linear stress
    /// <paramref name="barStress"/> (as without beams: the bars' own central difference is taken out again, since it would
    /// add their initial-displacement term, which on a shallow truss triples the geometric effect); springs cancel.
    /// The configurations ±h·u are the configuration update from rest by ±h times the linear increment: translations
    /// scale, the rotation of a node is exp(±h θ̂).
    /// </summary>
    public void GeometricStiffness(ReadOnlySpan<double> u, ReadOnlySpan<double> barStress, double[] values)
    {
        Array.Clear(values);
        double h = Step(u);
        if (h > 0)
        {
            var minus = new double[values.Length];
            var up = Scaled(u, h);
            var um = Scaled(u, -h);
            _asm.Tangent(up, values);
            _asm.Tangent(um, minus);
            for (int i = 0; i < values.Length; i++) values[i] = (values[i] - minus[i]) / (2 * h);
            Span<double> kp = stackalloc double[6];
            Span<double> km = stackalloc double[6];
            for (int b = 0; b < _m.BarCount; b++)
            {
                double A = _m.BarArea[b], L0 = _m.BarLength[b];
                var sp = Elements.BarKinematics.Evaluate(_m, up, b, _asm.PlasticStrain[b]);
                var sm = Elements.BarKinematics.Evaluate(_m, um, b, _asm.PlasticStrain[b]);
                Elements.BarKinematics.TangentBlock(sp, sp.TangentModulus, A, L0, true, kp);
                Elements.BarKinematics.TangentBlock(sm, sm.TangentModulus, A, L0, true, km);
                for (int t = 0; t < 6; t++) kp[t] = (kp[t] - km[t]) / (2 * h);
                _asm.AddBarMatrix(b, kp, -1.0, values);
            }
        }
        Span<double> g = stackalloc double[6];
        for (int b = 0; b < _m.BarCount; b++)
        {
            g.Clear();
            g[0] = g[3] = g[5] = barStress[b] * _m.BarArea[b] / _m.BarLength[b];
            _asm.AddBarMatrix(b, g, 1.0, values);
        }
    }

    private static double[] Scaled(ReadOnlySpan<double> u, double h)
    {
        var r = new double[u.Length];
        for (int d = 0; d < r.Length; d++) r[d] = h * u[d];
        return r;
    }
}
