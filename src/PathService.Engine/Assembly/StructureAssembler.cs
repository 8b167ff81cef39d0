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
/// and tangents for any configuration. The elements come in kinds (<see cref="ElementKind"/>: bars, then beams), each
/// declaring its nodal unknowns and how its element matrix and force are stored; the assembler knows no element's
/// mechanics. Deterministic: every entry sums its element contributions in model order (kind, then element), whether the
/// per-element work and the sums are shared among threads (large models) or not.
/// </summary>
public sealed class StructureAssembler
{
    private readonly StructuralModel _m;
    private readonly ElementKind[] _kinds;
    private readonly int[] _blockBase, _forceBase, _elementBase; // per kind: first stored number / first element in the global order
    private readonly int _elementCount;
    private readonly int[] _barSlots;     // 21 upper-triangle slots of the 6×6 bar matrix per bar, -1 where a DOF is restrained
    private readonly int[] _groundSlots;  // one diagonal slot per ground spring, -1 when restrained
    private readonly int[] _linkSlots;    // 3 slots (ii, ij, jj) per link spring

    // Gather form of the assembly (deterministic in parallel, same sums in the same order as the sequential loops):
    // per element its tangent or force numbers are computed independently, then every slot (or DOF) adds its
    // contributions in element order. Code = 2 * (index into the stored numbers) + (1 if subtracted).
    private readonly int[] _slotPtr, _slotCode;
    private readonly int[] _dofPtr, _dofCode;
    private readonly double[] _blocks;   // BlockSize per element, kinds one after the other
    private readonly double[] _forces;   // ForceSize per element
    private readonly WorkerTeam _team;
    private readonly AssemblyWork _work;
    private const int ParallelBarThreshold = 4000, BeamWeight = 30; // a beam costs about 30 bars (bench frame)

    /// <summary>
    /// Committed plastic strain of each bar (zero unless bars can yield): the material history of the last converged
    /// point. Iterations evaluate trial states from it; <see cref="CommitMaterialState"/> stores a converged state.
    /// </summary>
    public double[] PlasticStrain { get; }

    public SymmetricPattern Pattern { get; }
    public StructuralModel Model => _m;
    /// <summary>The element kinds in assembly order: bars, then beams.</summary>
    public IReadOnlyList<ElementKind> Kinds => _kinds;
    /// <summary>The beam kind (its results: local end forces).</summary>
    public BeamElementKind Beams { get; }

    // Local (r, c) pairs of the upper triangle of a 6×6 symmetric matrix, row-major.
    private static readonly (int R, int C)[] Upper6 = BuildUpper6();

    public StructureAssembler(StructuralModel model)
    {
        _m = model;
        PlasticStrain = new double[model.BarCount];
        Beams = new BeamElementKind(model);
        _kinds = [new BarElementKind(model, PlasticStrain), Beams];
        var map = model.Dofs;
        var eq = map.EquationOf;
        _blockBase = new int[_kinds.Length];
        _forceBase = new int[_kinds.Length];
        _elementBase = new int[_kinds.Length];
        int blocks = 0, forces = 0, elements = 0, upper = 0;
        for (int k = 0; k < _kinds.Length; k++)
        {
            _blockBase[k] = blocks; _forceBase[k] = forces; _elementBase[k] = elements;
            blocks += _kinds[k].Count * _kinds[k].BlockSize;
            forces += _kinds[k].Count * _kinds[k].ForceSize;
            elements += _kinds[k].Count;
            upper += _kinds[k].Count * _kinds[k].TangentLayout.Length;
        }
        _elementCount = elements;

        // Slot of every upper-triangle entry of every element matrix (-1 where a DOF is restrained or absent).
        var elementSlots = new int[upper];
        var entries = new List<(int, int)>(upper + 16);
        int q0 = 0;
        foreach (var kind in _kinds)
            for (int el = 0; el < kind.Count; el++)
                foreach (var (r, c, _, _) in kind.TangentLayout)
                {
                    int fr = kind.FullDof(map, el, r), fc = kind.FullDof(map, el, c);
                    int er = fr >= 0 ? eq[fr] : -1, ec = fc >= 0 ? eq[fc] : -1;
                    if (er >= 0 && ec >= 0) entries.Add((er, ec));
                }
        for (int s = 0; s < model.LinkSpringStiffness.Length; s++)
        {
            int ei = eq[model.LinkSpringStartDof[s]], ej = eq[model.LinkSpringEndDof[s]];
            if (ei >= 0 && ej >= 0) entries.Add((ei, ej));
        }
        Pattern = SymmetricPattern.FromEntries(map.FreeCount, entries);

        foreach (var kind in _kinds)
            for (int el = 0; el < kind.Count; el++)
                foreach (var (r, c, _, _) in kind.TangentLayout)
                {
                    int fr = kind.FullDof(map, el, r), fc = kind.FullDof(map, el, c);
                    int er = fr >= 0 ? eq[fr] : -1, ec = fc >= 0 ? eq[fc] : -1;
                    elementSlots[q0++] = er >= 0 && ec >= 0 ? Pattern.FindSlot(er, ec) : -1;
                }
        _barSlots = elementSlots[..(21 * model.BarCount)];
        _groundSlots = model.GroundSpringDof.Select(d => eq[d] >= 0 ? Pattern.FindSlot(eq[d], eq[d]) : -1).ToArray();
        _linkSlots = new int[3 * model.LinkSpringStiffness.Length];
        for (int s = 0; s < model.LinkSpringStiffness.Length; s++)
        {
            int ei = eq[model.LinkSpringStartDof[s]], ej = eq[model.LinkSpringEndDof[s]];
            _linkSlots[3 * s] = ei >= 0 ? Pattern.FindSlot(ei, ei) : -1;
            _linkSlots[3 * s + 1] = ei >= 0 && ej >= 0 ? Pattern.FindSlot(ei, ej) : -1;
            _linkSlots[3 * s + 2] = ej >= 0 ? Pattern.FindSlot(ej, ej) : -1;
        }

        // Contributions of the elements to each slot, in the order of the sequential loop (kind, element, layout entry).
        _slotPtr = new int[Pattern.NonZeroCount + 1];
        foreach (int slot in elementSlots) if (slot >= 0) _slotPtr[slot + 1]++;
        for (int q = 0; q < Pattern.NonZeroCount; q++) _slotPtr[q + 1] += _slotPtr[q];
        _slotCode = new int[_slotPtr[Pattern.NonZeroCount]];
        var fill = (int[])_slotPtr.Clone();
        q0 = 0;
        for (int k = 0; k < _kinds.Length; k++)
        {
            var kind = _kinds[k];
            for (int el = 0; el < kind.Count; el++)
                foreach (var (_, _, entry, negate) in kind.TangentLayout)
                {
                    int slot = elementSlots[q0++];
                    if (slot < 0) continue;
                    _slotCode[fill[slot]++] = 2 * (_blockBase[k] + kind.BlockSize * el + entry) + (negate ? 1 : 0);
                }
        }
        // Contributions of the elements to each full DOF (a bar: the start node subtracts, the end node adds).
        int fullCount = map.FullCount;
        _dofPtr = new int[fullCount + 1];
        foreach (var kind in _kinds)
            for (int el = 0; el < kind.Count; el++)
                foreach (var (local, _, _) in kind.ForceLayout)
                    if (kind.FullDof(map, el, local) is var d and >= 0) _dofPtr[d + 1]++;
        for (int d = 0; d < fullCount; d++) _dofPtr[d + 1] += _dofPtr[d];
        _dofCode = new int[_dofPtr[fullCount]];
        fill = (int[])_dofPtr.Clone();
        for (int k = 0; k < _kinds.Length; k++)
        {
            var kind = _kinds[k];
            for (int el = 0; el < kind.Count; el++)
                foreach (var (local, entry, negate) in kind.ForceLayout)
                    if (kind.FullDof(map, el, local) is var d and >= 0)
                        _dofCode[fill[d]++] = 2 * (_forceBase[k] + kind.ForceSize * el + entry) + (negate ? 1 : 0);
        }
        _blocks = new double[blocks];
        _forces = new double[forces];
        _team = new WorkerTeam(model.BarCount + BeamWeight * model.Beams.Count >= ParallelBarThreshold ? Environment.ProcessorCount : 1);
        _work = new AssemblyWork(this);
    }

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

    /// <summary>Stores what the converged configuration <paramref name="displacement"/> leaves behind in every element kind
    /// (the bars' plastic strain) as the committed history.</summary>
    public void CommitMaterialState(ReadOnlySpan<double> displacement)
    {
        foreach (var kind in _kinds) kind.Commit(displacement);
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

    /// <summary>The two phases of each assembly, run over a static split of elements, slots or DOFs among the threads.</summary>
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
            int fullCount = m.Dofs.FullCount;
            // The split follows the participants actually running (the budget may grant fewer than Threads); every
            // entry is computed by the same operations whichever part it falls in.
            int participants = a._team.Participants;
            var u = new ReadOnlySpan<double>(_u, fullCount);
            switch (_phase)
            {
                case Phase.BarBlocks:
                {
                    // Each participant evaluates a contiguous range of elements in the global order (kind, element).
                    var (g0, g1) = Range(a._elementCount, participant, participants);
                    var stress = _stress == null ? default : new ReadOnlySpan<double>(_stress, m.BarCount);
                    for (int k = 0; k < a._kinds.Length; k++)
                    {
                        var kind = a._kinds[k];
                        int e0 = Math.Max(g0 - a._elementBase[k], 0), e1 = Math.Min(g1 - a._elementBase[k], kind.Count);
                        if (e0 >= e1) continue;
                        kind.Tangents(e0, e1, u, _parts, stress, a._blocks.AsSpan(a._blockBase[k], kind.Count * kind.BlockSize));
                    }
                    break;
                }
                case Phase.GatherBlocks:
                {
                    var (q0, q1) = Range(a.Pattern.NonZeroCount, participant, participants);
                    int[] ptr = a._slotPtr, code = a._slotCode;
                    double[] blocks = a._blocks;
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
                    var (g0, g1) = Range(a._elementCount, participant, participants);
                    for (int k = 0; k < a._kinds.Length; k++)
                    {
                        var kind = a._kinds[k];
                        int e0 = Math.Max(g0 - a._elementBase[k], 0), e1 = Math.Min(g1 - a._elementBase[k], kind.Count);
                        if (e0 >= e1) continue;
                        kind.Forces(e0, e1, u, a._forces.AsSpan(a._forceBase[k], kind.Count * kind.ForceSize));
                    }
                    break;
                }
                case Phase.GatherForces:
                {
                    var (d0, d1) = Range(fullCount, participant, participants);
                    int[] ptr = a._dofPtr, code = a._dofCode;
                    double[] f = a._forces;
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
