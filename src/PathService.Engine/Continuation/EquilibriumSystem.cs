using System.Diagnostics;
using PathService.Engine.Assembly;
using PathService.Engine.Model;
using PathService.Engine.Sparse;

namespace PathService.Engine.Continuation;

/// <summary>
/// The discrete equilibrium problem r(u, λ) = f_int(u) − F_const − λ F_ref = 0 on the free DOFs, with its
/// tangent, one reusable LDLᵀ factorisation (supernodal, every solve checked by its backward error and refined when
/// needed: <see cref="RefinedFactorization"/>) and the work vectors of an iteration (allocated once).
/// Full vectors hold 3 or 6 entries per node (the <see cref="Configuration"/>: translations, and rotation vectors at
/// rotating nodes); free vectors one per equation of the <see cref="DofMap"/> (translations and spatial spins).
/// </summary>
internal sealed class EquilibriumSystem
{
    public StructuralModel Model { get; }
    public StructureAssembler Assembler { get; }
    public ISymmetricFactorization Factor => Refined;
    /// <summary>The factorisation with its backward-error check; its counters feed the trace summary.</summary>
    public RefinedFactorization Refined { get; }
    /// <summary>Solves of eigenvalue iterations (<see cref="EigenSolve"/>), which skip the backward-error check.</summary>
    public long EigenSolves { get; private set; }
    /// <summary>All solves with the factor: checked ones and those of eigenvalue iterations.</summary>
    public long Solves => Refined.CheckedSolves + EigenSolves;
    public double[] Values { get; }
    public int FreeCount { get; }
    public double[] ConstantFree { get; }
    public double[] ReferenceFree { get; }
    public double ReferenceNormSquared { get; }
    public int Factorizations { get; private set; }
    public TimeSpan FactorizationTime { get; private set; }
    public double SingularPivotRatio { get; }

    /// <summary>
    /// x ← K⁻¹x for inverse and Lanczos iterations. Their own convergence tests absorb a solve's rounding (an eigenvector
    /// is a direction, refined by the next step anyway), so once a checked solve with the same factor has met the
    /// backward-error bound, the residual that the check costs (a product with K, ~25 % of a solve) buys nothing there
    /// and the factor alone is used. Before any checked solve with this factor, or after one that exceeded the bound
    /// (an unstable factor), the solve is checked and refined like any other.
    /// </summary>
    public void EigenSolve(Span<double> x)
    {
        if (!FactorTrusted) { Refined.Solve(x); return; }
        EigenSolves++;
        Refined.Inner.Solve(x);
    }

    /// <inheritdoc cref="EigenSolve(Span{double})"/>
    public void EigenSolve(ReadOnlySpan<double> b, Span<double> x)
    {
        if (!FactorTrusted) { Refined.Solve(b, x); return; }
        EigenSolves++;
        Refined.Inner.Solve(b, x);
    }

    /// <summary>Two eigenvalue-iteration solves in place, in one pass over the factor: the solves are memory-bound, and
    /// two right-hand sides cost about 1.4 times one. Bit-identical to two <see cref="EigenSolve(Span{double})"/> calls
    /// (<see cref="ISymmetricFactorization.Solve2"/> does each right-hand side's operations in the same order).</summary>
    public void EigenSolve2(Span<double> x1, Span<double> x2)
    {
        if (!FactorTrusted) { EigenSolve(x1); EigenSolve(x2); return; }
        EigenSolves += 2;
        Refined.Inner.Solve2(x1, x2);
    }

    private bool FactorTrusted => Refined.CheckedSinceFactorize > 0 && !Refined.ExceededSinceFactorize;

    private readonly double[] _force;
    private readonly int[] _fullOf;

    public EquilibriumSystem(StructuralModel model, double singularPivotRatio, OrderingMethod ordering = OrderingMethod.Automatic,
        double backwardErrorBound = RefinedFactorization.DefaultBound)
    {
        Model = model;
        SingularPivotRatio = singularPivotRatio;
        Assembler = new StructureAssembler(model);
        Refined = new RefinedFactorization(new SupernodalLdlFactorization(OrderingChoice.Analyze(model, Assembler.Pattern, ordering)), backwardErrorBound);
        Values = new double[Assembler.Pattern.NonZeroCount];
        FreeCount = model.Dofs.FreeCount;
        _fullOf = model.Dofs.FullOf;
        _force = new double[model.Dofs.FullCount];
        ConstantFree = new double[FreeCount];
        ReferenceFree = new double[FreeCount];
        model.Dofs.Gather(model.ConstantLoad, ConstantFree);
        model.Dofs.Gather(model.ReferenceLoad, ReferenceFree);
        ReferenceNormSquared = Dot(ReferenceFree, ReferenceFree);
    }

    /// <summary>Assembles and factorises the consistent tangent at <paramref name="u"/> (full vector).</summary>
    public LdlStatus Refactor(ReadOnlySpan<double> u)
    {
        Assembler.Tangent(u, Values);
        long t0 = Stopwatch.GetTimestamp();
        var status = Factor.Factorize(Values, SingularPivotRatio);
        FactorizationTime += Stopwatch.GetElapsedTime(t0);
        Factorizations++;
        return status;
    }

    /// <summary>Residual r = f_int(u) − F_const − λF_ref on the free DOFs; returns ‖r‖ (NaN if any entry is not finite).</summary>
    public double Residual(ReadOnlySpan<double> u, double lambda, Span<double> r)
    {
        Assembler.InternalForce(u, _force);
        double s = 0;
        for (int e = 0; e < FreeCount; e++)
        {
            double v = _force[_fullOf[e]] - ConstantFree[e] - lambda * ReferenceFree[e];
            r[e] = v;
            s += v * v;
        }
        return double.IsFinite(s) ? Math.Sqrt(s) : double.NaN;
    }

    /// <summary>Scale of the residual: max(‖F_const + λF_ref‖, ‖F_ref‖).</summary>
    public double LoadNorm(double lambda)
    {
        double s = 0;
        for (int e = 0; e < FreeCount; e++)
        {
            double v = ConstantFree[e] + lambda * ReferenceFree[e];
            s += v * v;
        }
        return Math.Max(Math.Sqrt(s), Math.Sqrt(ReferenceNormSquared));
    }

    /// <summary>u_full ← u_full ⊕ scale·δ over the free DOFs: translations add, rotations compose (<see cref="Configuration.Advance"/>).</summary>
    public void AddFree(Span<double> full, ReadOnlySpan<double> delta, double scale = 1.0) => Configuration.Advance(Model.Dofs, full, delta, scale);

    /// <summary>Full state at a displacement and load factor: displacements, bar forces and strains, reactions.</summary>
    public StructureState Snapshot(ReadOnlySpan<double> u, double lambda)
    {
        var m = Model;
        var forces = new double[m.BarCount];
        var strains = new double[m.BarCount];
        for (int b = 0; b < m.BarCount; b++)
        {
            var bar = Elements.BarKinematics.Evaluate(m, u, b, Assembler.PlasticStrain[b]);
            forces[b] = Elements.BarKinematics.AxialForce(bar, m.BarArea[b], m.BarLength[b]);
            strains[b] = bar.Strain;
        }
        var reactions = new double[m.Dofs.FullCount];
        Assembler.InternalForce(u, _force);
        var eq = m.Dofs.EquationOf;
        for (int d = 0; d < reactions.Length; d++)
            if (eq[d] < 0) reactions[d] = _force[d] - m.ConstantLoad[d] - lambda * m.ReferenceLoad[d];
        var beamForces = new double[12 * m.Beams.Count];
        for (int e = 0; e < m.Beams.Count; e++) Assembler.Beams.EndForces(e, u, beamForces.AsSpan(12 * e, 12));
        return new StructureState(u.ToArray(), forces, strains, reactions) { BeamEndForces = beamForces };
    }

    public static double Dot(ReadOnlySpan<double> a, ReadOnlySpan<double> b)
    {
        double s = 0;
        for (int i = 0; i < a.Length; i++) s += a[i] * b[i];
        return s;
    }
}
