using PathService.Engine.Elements;
using PathService.Engine.Model;
using PathService.Engine.Sparse;

namespace PathService.Engine.Assembly;

/// <summary>Which parts of the tangent stiffness to assemble.</summary>
public enum TangentParts
{
    /// <summary>Material + geometric: the consistent tangent of the Total Lagrangian bar.</summary>
    Consistent,
    /// <summary>Material part only (with the current chord); at zero displacement this is the linear stiffness K0.</summary>
    MaterialOnly,
    /// <summary>Geometric (initial-stress) part only, from the given bar stresses.</summary>
    GeometricOnly,
}

/// <summary>
/// Builds the sparse pattern of the free-DOF tangent once per model, with element-to-slot maps so that
/// assembly writes straight into the factor's input array without searching; then evaluates internal forces
/// and tangents for any displacement state. Deterministic: elements are visited in model order.
/// </summary>
public sealed class StructureAssembler
{
    private readonly StructuralModel _m;
    private readonly int[] _barSlots;     // 21 upper-triangle slots of the 6×6 bar matrix per bar, -1 where a DOF is restrained
    private readonly int[] _groundSlots;  // one diagonal slot per ground spring, -1 when restrained
    private readonly int[] _linkSlots;    // 3 slots (ii, ij, jj) per link spring

    public SymmetricPattern Pattern { get; }
    public StructuralModel Model => _m;

    // Local (r, c) pairs of the upper triangle of a 6×6 symmetric matrix, row-major.
    private static readonly (int R, int C)[] Upper6 = BuildUpper6();

    public StructureAssembler(StructuralModel model)
    {
        _m = model;
        var eq = model.Dofs.EquationOf;
        var entries = new List<(int, int)>(model.BarCount * 21 + 16);
        for (int b = 0; b < model.BarCount; b++)
            foreach (var (r, c) in Upper6)
            {
                int er = eq[BarDof(b, r)], ec = eq[BarDof(b, c)];
                if (er >= 0 && ec >= 0) entries.Add((er, ec));
            }
        for (int s = 0; s < model.LinkSpringStiffness.Length; s++)
        {
            int ei = eq[model.LinkSpringStartDof[s]], ej = eq[model.LinkSpringEndDof[s]];
            if (ei >= 0 && ej >= 0) entries.Add((ei, ej));
        }
        Pattern = SymmetricPattern.FromEntries(model.Dofs.FreeCount, entries);

        _barSlots = new int[model.BarCount * 21];
        for (int b = 0; b < model.BarCount; b++)
            for (int t = 0; t < 21; t++)
            {
                var (r, c) = Upper6[t];
                int er = eq[BarDof(b, r)], ec = eq[BarDof(b, c)];
                _barSlots[21 * b + t] = er >= 0 && ec >= 0 ? Pattern.FindSlot(er, ec) : -1;
            }
        _groundSlots = model.GroundSpringDof.Select(d => eq[d] >= 0 ? Pattern.FindSlot(eq[d], eq[d]) : -1).ToArray();
        _linkSlots = new int[3 * model.LinkSpringStiffness.Length];
        for (int s = 0; s < model.LinkSpringStiffness.Length; s++)
        {
            int ei = eq[model.LinkSpringStartDof[s]], ej = eq[model.LinkSpringEndDof[s]];
            _linkSlots[3 * s] = ei >= 0 ? Pattern.FindSlot(ei, ei) : -1;
            _linkSlots[3 * s + 1] = ei >= 0 && ej >= 0 ? Pattern.FindSlot(ei, ej) : -1;
            _linkSlots[3 * s + 2] = ej >= 0 ? Pattern.FindSlot(ej, ej) : -1;
        }
    }

    private int BarDof(int bar, int local) => 3 * (local < 3 ? _m.BarStart[bar] : _m.BarEnd[bar]) + local % 3;

    /// <summary>Internal force vector f_int(u) over all DOFs (restrained ones included: they give the reactions).</summary>
    public void InternalForce(ReadOnlySpan<double> displacement, Span<double> force)
    {
        force.Clear();
        for (int b = 0; b < _m.BarCount; b++)
        {
            var s = BarKinematics.Evaluate(_m.Coordinates, displacement, _m.BarStart[b], _m.BarEnd[b], _m.BarLength[b], _m.BarModulus[b], _m.BarInitialStress[b]);
            BarKinematics.AddInternalForce(s, _m.BarArea[b], _m.BarLength[b], _m.BarStart[b], _m.BarEnd[b], force);
        }
        for (int s = 0; s < _m.GroundSpringStiffness.Length; s++)
            force[_m.GroundSpringDof[s]] += _m.GroundSpringStiffness[s] * displacement[_m.GroundSpringDof[s]];
        for (int s = 0; s < _m.LinkSpringStiffness.Length; s++)
        {
            int i = _m.LinkSpringStartDof[s], j = _m.LinkSpringEndDof[s];
            double t = _m.LinkSpringStiffness[s] * (displacement[j] - displacement[i]);
            force[i] -= t;
            force[j] += t;
        }
    }

    /// <summary>
    /// Assembles the free-DOF tangent into <paramref name="values"/> (aligned with <see cref="Pattern"/>).
    /// For <see cref="TangentParts.GeometricOnly"/>, <paramref name="barStress"/> gives each bar's stress S.
    /// </summary>
    public void Tangent(ReadOnlySpan<double> displacement, Span<double> values, TangentParts parts = TangentParts.Consistent, ReadOnlySpan<double> barStress = default)
    {
        values.Clear();
        Span<double> k6 = stackalloc double[6];
        for (int b = 0; b < _m.BarCount; b++)
        {
            double L0 = _m.BarLength[b], A = _m.BarArea[b];
            var s = BarKinematics.Evaluate(_m.Coordinates, displacement, _m.BarStart[b], _m.BarEnd[b], L0, _m.BarModulus[b], _m.BarInitialStress[b]);
            switch (parts)
            {
                case TangentParts.Consistent: BarKinematics.TangentBlock(s, _m.BarModulus[b], A, L0, true, k6); break;
                case TangentParts.MaterialOnly: BarKinematics.TangentBlock(s, _m.BarModulus[b], A, L0, false, k6); break;
                default:
                    double g = barStress[b] * A / L0;
                    k6.Clear(); k6[0] = g; k6[3] = g; k6[5] = g;
                    break;
            }
            int baseSlot = 21 * b;
            for (int t = 0; t < 21; t++)
            {
                int slot = _barSlots[baseSlot + t];
                if (slot < 0) continue;
                var (r, c) = Upper6[t];
                double v = k6[BarKinematics.BlockEntry(r % 3, c % 3)];
                // K = [k, −k; −k, k]: the sign flips between the start-node and end-node blocks.
                values[slot] += (r < 3) == (c < 3) ? v : -v;
            }
        }
        if (parts == TangentParts.GeometricOnly) return;
        for (int s = 0; s < _groundSlots.Length; s++)
            if (_groundSlots[s] >= 0) values[_groundSlots[s]] += _m.GroundSpringStiffness[s];
        for (int s = 0; s < _m.LinkSpringStiffness.Length; s++)
        {
            double k = _m.LinkSpringStiffness[s];
            if (_linkSlots[3 * s] >= 0) values[_linkSlots[3 * s]] += k;
            if (_linkSlots[3 * s + 1] >= 0) values[_linkSlots[3 * s + 1]] -= k;
            if (_linkSlots[3 * s + 2] >= 0) values[_linkSlots[3 * s + 2]] += k;
        }
    }

    /// <summary>Second Piola-Kirchhoff stress of every bar at a displacement state.</summary>
    public void BarStresses(ReadOnlySpan<double> displacement, Span<double> stress)
    {
        for (int b = 0; b < _m.BarCount; b++)
            stress[b] = BarKinematics.Evaluate(_m.Coordinates, displacement, _m.BarStart[b], _m.BarEnd[b], _m.BarLength[b], _m.BarModulus[b], _m.BarInitialStress[b]).Stress;
    }

    /// <summary>Axial force N = A0 S ℓ/L0 of every bar (tension positive).</summary>
    public void BarForces(ReadOnlySpan<double> displacement, Span<double> force)
    {
        for (int b = 0; b < _m.BarCount; b++)
        {
            var s = BarKinematics.Evaluate(_m.Coordinates, displacement, _m.BarStart[b], _m.BarEnd[b], _m.BarLength[b], _m.BarModulus[b], _m.BarInitialStress[b]);
            force[b] = BarKinematics.AxialForce(s, _m.BarArea[b], _m.BarLength[b]);
        }
    }

    /// <summary>Symmetric matrix-vector product y = K x for a values array on <see cref="Pattern"/> (free DOFs).</summary>
    public void Multiply(ReadOnlySpan<double> values, ReadOnlySpan<double> x, Span<double> y)
    {
        y.Clear();
        var cp = Pattern.ColumnPointers; var ri = Pattern.RowIndices;
        for (int j = 0; j < Pattern.Size; j++)
            for (int p = cp[j]; p < cp[j + 1]; p++)
            {
                int i = ri[p];
                y[i] += values[p] * x[j];
                if (i != j) y[j] += values[p] * x[i];
            }
    }

    private static (int, int)[] BuildUpper6()
    {
        var list = new List<(int, int)>(21);
        for (int r = 0; r < 6; r++)
            for (int c = r; c < 6; c++) list.Add((r, c));
        return list.ToArray();
    }
}
