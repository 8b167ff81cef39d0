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
/// and tangents for any displacement state. Deterministic: every entry sums its element contributions in model
/// order, whether the per-element work and the sums are shared among threads (large models) or not.
/// </summary>
public sealed class StructureAssembler
{
    private readonly StructuralModel _m;
    private readonly int[] _barSlots;     // 21 upper-triangle slots of the 6×6 bar matrix per bar, -1 where a DOF is restrained
    private readonly int[] _groundSlots;  // one diagonal slot per ground spring, -1 when restrained
    private readonly int[] _linkSlots;    // 3 slots (ii, ij, jj) per link spring

    // Gather form of the assembly (deterministic in parallel, same sums in the same order as the sequential loops):
    // per bar the 6 block entries (tangent) or 3 force components are computed independently, then every slot
    // (or DOF) adds its contributions in bar order. Code = 2 * (index into the per-bar buffer) + (1 if subtracted).
    private readonly int[] _slotPtr, _slotCode;
    private readonly int[] _dofPtr, _dofCode;
    private readonly double[] _barBlock;   // 6 per bar
    private readonly double[] _barForce;   // 3 per bar
    private readonly WorkerTeam _team;
    private readonly AssemblyWork _work;
    private const int ParallelBarThreshold = 4000;

    /// <summary>
    /// Committed plastic strain of each bar (zero unless bars can yield): the material history of the last converged
    /// point. Iterations evaluate trial states from it; <see cref="CommitMaterialState"/> stores a converged state.
    /// </summary>
    public double[] PlasticStrain { get; }

    public SymmetricPattern Pattern { get; }
    public StructuralModel Model => _m;

    // Local (r, c) pairs of the upper triangle of a 6×6 symmetric matrix, row-major.
    private static readonly (int R, int C)[] Upper6 = BuildUpper6();

    public StructureAssembler(StructuralModel model)
    {
        _m = model;
        PlasticStrain = new double[model.BarCount];
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

        // Contributions of the bars to each slot, in the order of the sequential loop (bar, then t).
        _slotPtr = new int[Pattern.NonZeroCount + 1];
        for (int q = 0; q < _barSlots.Length; q++) if (_barSlots[q] >= 0) _slotPtr[_barSlots[q] + 1]++;
        for (int q = 0; q < Pattern.NonZeroCount; q++) _slotPtr[q + 1] += _slotPtr[q];
        _slotCode = new int[_slotPtr[Pattern.NonZeroCount]];
        var fill = (int[])_slotPtr.Clone();
        for (int b = 0; b < model.BarCount; b++)
            for (int t = 0; t < 21; t++)
            {
                int slot = _barSlots[21 * b + t];
                if (slot < 0) continue;
                var (r, c) = Upper6[t];
                int entry = 6 * b + BarKinematics.BlockEntry(r % 3, c % 3);
                _slotCode[fill[slot]++] = 2 * entry + ((r < 3) == (c < 3) ? 0 : 1);
            }
        // Contributions of the bars to each full DOF: start node subtracts, end node adds.
        int fullCount = 3 * model.NodeCount;
        _dofPtr = new int[fullCount + 1];
        for (int b = 0; b < model.BarCount; b++)
            for (int k = 0; k < 3; k++) { _dofPtr[3 * model.BarStart[b] + k + 1]++; _dofPtr[3 * model.BarEnd[b] + k + 1]++; }
        for (int d = 0; d < fullCount; d++) _dofPtr[d + 1] += _dofPtr[d];
        _dofCode = new int[_dofPtr[fullCount]];
        fill = (int[])_dofPtr.Clone();
        for (int b = 0; b < model.BarCount; b++)
            for (int k = 0; k < 3; k++)
            {
                _dofCode[fill[3 * model.BarStart[b] + k]++] = 2 * (3 * b + k) + 1;
                _dofCode[fill[3 * model.BarEnd[b] + k]++] = 2 * (3 * b + k);
            }
        _barBlock = new double[6 * model.BarCount];
        _barForce = new double[3 * model.BarCount];
        _team = new WorkerTeam(model.BarCount >= ParallelBarThreshold ? Environment.ProcessorCount : 1);
        _work = new AssemblyWork(this);
    }

    private int BarDof(int bar, int local) => 3 * (local < 3 ? _m.BarStart[bar] : _m.BarEnd[bar]) + local % 3;

    /// <summary>Internal force vector f_int(u) over all DOFs (restrained ones included: they give the reactions).</summary>
    public unsafe void InternalForce(ReadOnlySpan<double> displacement, Span<double> force)
    {
        fixed (double* pu = displacement, pf = force)
        {
            _work.Begin(AssemblyWork.Phase.BarForces, pu, pf, TangentParts.Consistent, null);
            _team.Run(_work, _team.Threads);
            _work.Begin(AssemblyWork.Phase.GatherForces, pu, pf, TangentParts.Consistent, null);
            _team.Run(_work, _team.Threads);
        }
        SpringForces.AddInternalForce(_m, displacement, force);
    }

    /// <summary>
    /// Assembles the free-DOF tangent into <paramref name="values"/> (aligned with <see cref="Pattern"/>).
    /// For <see cref="TangentParts.GeometricOnly"/>, <paramref name="barStress"/> gives each bar's stress S.
    /// </summary>
    public unsafe void Tangent(ReadOnlySpan<double> displacement, Span<double> values, TangentParts parts = TangentParts.Consistent, ReadOnlySpan<double> barStress = default)
    {
        if (values.Length != Pattern.NonZeroCount)
            throw new ArgumentException($"Expected {Pattern.NonZeroCount} values aligned with the pattern, got {values.Length}.", nameof(values));
        fixed (double* pu = displacement, pv = values, ps = barStress)
        {
            _work.Begin(AssemblyWork.Phase.BarBlocks, pu, pv, parts, ps);
            _team.Run(_work, _team.Threads);
            _work.Begin(AssemblyWork.Phase.GatherBlocks, pu, pv, parts, ps);
            _team.Run(_work, _team.Threads);
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
            stress[b] = BarKinematics.Evaluate(_m, displacement, b, PlasticStrain[b]).Stress;
    }

    /// <summary>Axial force N = A0 S ℓ/L0 of every bar (tension positive).</summary>
    public void BarForces(ReadOnlySpan<double> displacement, Span<double> force)
    {
        for (int b = 0; b < _m.BarCount; b++)
        {
            var s = BarKinematics.Evaluate(_m, displacement, b, PlasticStrain[b]);
            force[b] = BarKinematics.AxialForce(s, _m.BarArea[b], _m.BarLength[b]);
        }
    }

    /// <summary>Stores the plastic strain of the state <paramref name="displacement"/> as the committed material history.</summary>
    public void CommitMaterialState(ReadOnlySpan<double> displacement)
    {
        if (!_m.HasMemberLaws) return;
        var next = new double[_m.BarCount];
        for (int b = 0; b < _m.BarCount; b++) next[b] = BarKinematics.Evaluate(_m, displacement, b, PlasticStrain[b]).PlasticStrain;
        next.CopyTo(PlasticStrain, 0);
    }

    /// <summary>
    /// Adds factor × the bar's 6×6 matrix [k, −k; −k, k] into <paramref name="values"/> (aligned with
    /// <see cref="Pattern"/>), k given by its 6 entries as from <see cref="BarKinematics.TangentBlock"/>: used to switch
    /// one bar's stiffness on or off without reassembling.
    /// </summary>
    public void AddBarMatrix(int bar, ReadOnlySpan<double> k6, double factor, Span<double> values)
    {
        for (int t = 0; t < 21; t++)
        {
            int slot = _barSlots[21 * bar + t];
            if (slot < 0) continue;
            var (r, c) = Upper6[t];
            double v = factor * k6[BarKinematics.BlockEntry(r % 3, c % 3)];
            values[slot] += (r < 3) == (c < 3) ? v : -v;
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

    /// <summary>The two phases of each assembly, run over a static split of bars, slots or DOFs among the threads.</summary>
    private sealed unsafe class AssemblyWork(StructureAssembler a) : ITeamWork
    {
        public enum Phase { BarBlocks, GatherBlocks, BarForces, GatherForces }

        private Phase _phase;
        private double* _u, _out, _stress;
        private TangentParts _parts;

        public void Begin(Phase phase, double* u, double* output, TangentParts parts, double* stress)
        {
            _phase = phase; _u = u; _out = output; _parts = parts; _stress = stress;
        }

        private static (int Start, int End) Range(int count, int part, int parts) =>
            ((int)((long)count * part / parts), (int)((long)count * (part + 1) / parts));

        public void Execute(int participant)
        {
            var m = a._m;
            int fullCount = 3 * m.NodeCount;
            // The split follows the participants actually running (the budget may grant fewer than Threads); every
            // entry is computed by the same operations whichever part it falls in.
            int participants = a._team.Participants;
            var u = new ReadOnlySpan<double>(_u, fullCount);
            switch (_phase)
            {
                case Phase.BarBlocks:
                {
                    var (b0, b1) = Range(m.BarCount, participant, participants);
                    var blocks = a._barBlock.AsSpan();
                    for (int b = b0; b < b1; b++)
                    {
                        double L0 = m.BarLength[b], A = m.BarArea[b];
                        var k6 = blocks.Slice(6 * b, 6);
                        var s = BarKinematics.Evaluate(m, u, b, a.PlasticStrain[b]);
                        switch (_parts)
                        {
                            case TangentParts.Consistent: BarKinematics.TangentBlock(s, s.TangentModulus, A, L0, true, k6); break;
                            case TangentParts.MaterialOnly: BarKinematics.TangentBlock(s, s.TangentModulus, A, L0, false, k6); break;
                            default:
                                double g = _stress[b] * A / L0;
                                k6.Clear(); k6[0] = g; k6[3] = g; k6[5] = g;
                                break;
                        }
                    }
                    break;
                }
                case Phase.GatherBlocks:
                {
                    var (q0, q1) = Range(a.Pattern.NonZeroCount, participant, participants);
                    int[] ptr = a._slotPtr, code = a._slotCode;
                    double[] blocks = a._barBlock;
                    for (int q = q0; q < q1; q++)
                    {
                        double v = 0;
                        for (int p = ptr[q]; p < ptr[q + 1]; p++)
                        {
                            int c = code[p];
                            double x = blocks[c >> 1];
                            v += (c & 1) == 0 ? x : -x;
                        }
                        _out[q] = v;
                    }
                    break;
                }
                case Phase.BarForces:
                {
                    var (b0, b1) = Range(m.BarCount, participant, participants);
                    double[] f = a._barForce;
                    for (int b = b0; b < b1; b++)
                    {
                        var s = BarKinematics.Evaluate(m, u, b, a.PlasticStrain[b]);
                        double c = m.BarArea[b] * s.Stress / m.BarLength[b];
                        f[3 * b] = c * s.Dx; f[3 * b + 1] = c * s.Dy; f[3 * b + 2] = c * s.Dz;
                    }
                    break;
                }
                case Phase.GatherForces:
                {
                    var (d0, d1) = Range(fullCount, participant, participants);
                    int[] ptr = a._dofPtr, code = a._dofCode;
                    double[] f = a._barForce;
                    for (int d = d0; d < d1; d++)
                    {
                        double v = 0;
                        for (int p = ptr[d]; p < ptr[d + 1]; p++)
                        {
                            int c = code[p];
                            double x = f[c >> 1];
                            v = (c & 1) == 0 ? v + x : v - x;
                        }
                        _out[d] = v;
                    }
                    break;
                }
            }
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
