using PathService.Engine.Assembly;
using PathService.Engine.Model;
using PathService.Engine.Sparse;
using PathService.Engine.Stability;

namespace PathService.Engine.Analyses;

/// <summary>Small-displacement solution K0 u = F: displacements (in the <see cref="DofMap"/> layout: 3 per node, 6 at
/// rotating nodes, the rotations as small rotation angles), bar forces (tension positive), reactions (moments at held rotations).</summary>
public sealed record LinearStaticResult(double LoadFactor, double[] Displacements, double[] BarForces, double[] Reactions)
{
    /// <summary>Linear member-end actions of every beam element, 12 each, in the layout of
    /// <see cref="Continuation.StructureState.BeamEndForces"/> (local axes of the undeformed element); empty without beams.</summary>
    public double[] BeamEndForces { get; init; } = [];

    /// <summary>Ids of the tension-only and compression-only bars that are slack in this solution (they carry nothing), in model order.</summary>
    public IReadOnlyList<string> SlackBars { get; init; } = [];

    /// <summary>Linear solves made by the active-set iteration over the one-sided bars (1 when there are none).</summary>
    public int ActiveSetIterations { get; init; } = 1;
}

/// <summary>
/// Classical linear analysis at one load level F = F_const + λ·F_ref (λ = 1 by default): small displacements, linear
/// axial strain ε = e·(u_j − u_i)/L0 with e the initial unit chord. K0 is the tangent at the undeformed state (material
/// part plus the geometric part of any initial stress), so a prestressed cable net is handled. The comparison every
/// engineer knows, and the start of the linearised buckling analysis. Beams enter with the kernel's tangent at rest (the
/// linear frame element) through <see cref="BeamLinearTerms"/>; their rotations are small angles and add (theory §15.1).
/// </summary>
/// <remarks>
/// Tension-only and compression-only bars follow the member law of the trace (<see cref="Elements.BarMaterial.IsSlack"/>)
/// on the linear stress S = S0 + E ε: an active-set iteration solves with every bar active, makes slack the
/// tension-only bars in compression and the compression-only bars in tension, makes active again a slack bar whose
/// linear stress (its gap) returns to the active side, and repeats until the set is unchanged (the primal-dual active
/// set strategy, M. Hintermüller, K. Ito and K. Kunisch, "The primal-dual active set strategy as a semismooth Newton
/// method", SIAM J. Optim. 13, 2002). If a set of slack bars would repeat, the iteration goes on from there switching
/// one bar at a time (the least-index rule); a repeat in that phase or more than <see cref="ActiveSetCap"/> solves gives
/// an <see cref="ActiveSetCyclingException"/> naming the bars that switch.
/// </remarks>
public static class LinearStaticAnalysis
{
    /// <summary>
    /// Most active-set solves for k one-sided bars: min(2k + 10, 200). Each solve switches at least one bar and the
    /// iteration usually settles in two to six (many bars switch at once); 2k lets every bar be switched off and on
    /// once in the one-at-a-time phase, and 200 bounds the cost, since each solve is a factorisation (common practice, no source).
    /// </summary>
    public static int ActiveSetCap(int oneSidedBars) => Math.Min(2 * oneSidedBars + 10, 200);

    /// <summary>Relative band around S = 0 inside which a one-sided bar keeps its state (round-off must not switch it).</summary>
    private const double SwitchBand = 1e-10;

    /// <exception cref="MechanismException">K0 (with the slack bars left out) is singular.</exception>
    /// <exception cref="ActiveSetCyclingException">No consistent set of slack bars was found.</exception>
    /// <exception cref="OperationCanceledException">The token was cancelled during the active-set iteration.</exception>
    public static LinearStaticResult Run(StructuralModel model, double loadFactor = 1.0, bool includeConstant = true,
        double singularPivotRatio = 1e-11, OrderingMethod ordering = OrderingMethod.Automatic, CancellationToken cancellationToken = default)
    {
        cancellationToken.ThrowIfCancellationRequested();
        var sys = new Continuation.EquilibriumSystem(model, singularPivotRatio, ordering);
        var u0 = new double[model.Dofs.FullCount];
        // The token is checked between the expensive parts (ordering, factorisation); it throws OperationCanceledException.
        cancellationToken.ThrowIfCancellationRequested();
        var oneSided = Enumerable.Range(0, model.BarCount).Where(b => model.BarBehavior[b] != Elements.BarBehavior.Elastic).ToArray();
        if (oneSided.Length == 0)
        {
            var status = sys.Refactor(u0);
            cancellationToken.ThrowIfCancellationRequested();
            MechanismDetector.ThrowIfSingular(sys, status);
            return Solve(model, sys, loadFactor, includeConstant, withPrescribed: true, beams: Beams(model, sys));
        }
        return RunActiveSet(model, sys, oneSided, loadFactor, includeConstant, singularPivotRatio, cancellationToken);
    }

    private static LinearStaticResult RunActiveSet(StructuralModel model, Continuation.EquilibriumSystem sys, int[] oneSided,
        double loadFactor, bool includeConstant, double singularPivotRatio, CancellationToken ct)
    {
        var asm = sys.Assembler;
        var beams = Beams(model, sys);
        var u0 = new double[model.Dofs.FullCount];
        // K0 as the trace sees it at rest, and for each one-sided bar its matrix at rest and when active (taut).
        var kRest = new double[asm.Pattern.NonZeroCount];
        asm.Tangent(u0, kRest);
        int k = oneSided.Length;
        var restActive = new bool[k];
        var restBlock = new double[6 * k];
        var activeBlock = new double[6 * k];
        for (int q = 0; q < k; q++)
        {
            int b = oneSided[q];
            var rest = Elements.BarKinematics.Evaluate(model, u0, b, 0);
            restActive[q] = rest.Regime != Elements.BarRegime.Slack;
            Elements.BarKinematics.TangentBlock(rest, rest.TangentModulus, model.BarArea[b], model.BarLength[b], true, restBlock.AsSpan(6 * q, 6));
            var taut = Elements.BarKinematics.Evaluate(model.Coordinates, u0, model.BarStart[b], model.BarEnd[b], model.BarLength[b], model.BarModulus[b], model.BarInitialStress[b]);
            Elements.BarKinematics.TangentBlock(taut, model.BarModulus[b], model.BarArea[b], model.BarLength[b], true, activeBlock.AsSpan(6 * q, 6));
        }

        // Zobrist hashing of the slack set (A. L. Zobrist, "A new hashing method with application for game playing", 1970):
        // one random 64-bit key per bar, XOR of the keys of the slack bars; a repeat means the iteration cycles.
        var rng = new Random(7129);
        var keys = new ulong[k];
        for (int q = 0; q < k; q++) keys[q] = (ulong)rng.NextInt64() ^ ((ulong)rng.Next() << 63);
        var seen = new Dictionary<ulong, int> { [0UL] = 1 };
        var flips = new List<int[]>();
        ulong hash = 0;
        bool leastIndex = false;
        int firstLeastIndex = 0;

        var active = new bool[model.BarCount];
        Array.Fill(active, true);
        int cap = ActiveSetCap(k);
        var stress = new double[k];
        for (int it = 1; ; it++)
        {
            ct.ThrowIfCancellationRequested();
            kRest.CopyTo(sys.Values, 0);
            for (int q = 0; q < k; q++)
            {
                bool on = active[oneSided[q]];
                if (on == restActive[q]) continue;
                if (on) asm.AddBarMatrix(oneSided[q], activeBlock.AsSpan(6 * q, 6), 1.0, sys.Values);
                else asm.AddBarMatrix(oneSided[q], restBlock.AsSpan(6 * q, 6), -1.0, sys.Values);
            }
            var status = sys.Factor.Factorize(sys.Values, singularPivotRatio);
            try { MechanismDetector.ThrowIfSingular(sys, status); }
            catch (MechanismException e) when (oneSided.Any(b => !active[b]))
            {
                throw new MechanismException(e.NodeId, e.Direction, e.Message +
                    $" This is with the one-sided bars {Names(model, oneSided.Where(b => !active[b]))} slack (a tension-only bar in compression or a compression-only bar in tension carries nothing).");
            }
            var result = Solve(model, sys, loadFactor, includeConstant, withPrescribed: true, active, beams);

            // Linear stress S = S0 + E e·Δu/L0 of each one-sided bar: its force when active, its gap when slack.
            double scale = 0;
            for (int b = 0; b < model.BarCount; b++) scale = Math.Max(scale, Math.Abs(result.BarForces[b] / model.BarArea[b]));
            for (int q = 0; q < k; q++)
            {
                int b = oneSided[q];
                stress[q] = model.BarInitialStress[b] + model.BarModulus[b] * LinearStrain(model, result.Displacements, b);
                scale = Math.Max(scale, Math.Abs(stress[q]));
            }
            double band = SwitchBand * scale;
            var switched = new List<int>();
            for (int q = 0; q < k; q++)
            {
                int b = oneSided[q];
                var behavior = model.BarBehavior[b];
                // The trace's rule, with a round-off band: an active bar goes slack only beyond the band on the open side, a
                // slack bar returns once its gap reaches the band on the closed side.
                double toClosed = behavior == Elements.BarBehavior.TensionOnly ? band : -band;
                bool nextActive = active[b]
                    ? !Elements.BarMaterial.IsSlack(behavior, stress[q] + toClosed)
                    : !Elements.BarMaterial.IsSlack(behavior, stress[q] - toClosed);
                if (nextActive != active[b]) switched.Add(q);
            }
            if (switched.Count == 0)
                return result with
                {
                    SlackBars = oneSided.Where(b => !active[b]).Select(b => model.BarIds[b]).ToArray(),
                    ActiveSetIterations = it,
                };
            // After a repeat, one bar at a time: the violating bar of least index (Murty's least-index rule, which ends in
            // finitely many solves when the complementarity problem has a P-matrix, as without prestress; K. G. Murty,
            // "Note on a Bard-type scheme for solving the complementarity problem", Opsearch 11, 1974, from memory).
            if (leastIndex) switched.RemoveRange(1, switched.Count - 1);
            ulong next = hash;
            foreach (int q in switched) next ^= keys[q];
            if (seen.ContainsKey(next) && !leastIndex)
            {
                leastIndex = true;
                seen.Clear();
                seen[hash] = it;
                firstLeastIndex = it;
                switched.RemoveRange(1, switched.Count - 1);
                next = hash ^ keys[switched[0]];
            }
            flips.Add(switched.Select(q => oneSided[q]).ToArray());
            if (seen.TryGetValue(next, out int first))
            {
                var cycling = flips.Skip(first - 1).SelectMany(f => f).Distinct().Order().ToArray();
                throw new ActiveSetCyclingException(cycling.Select(b => model.BarIds[b]).ToArray(), it,
                    $"the linear analysis cannot settle which one-sided bars are slack: after {it} solves (one bar at a time from solve {firstLeastIndex}) " +
                    $"the set of slack bars would repeat the one of solve {first}, with bars {Names(model, cycling)} switching between taut and slack. " +
                    "Follow the load with the nonlinear trace, which resolves them step by step.");
            }
            if (it >= cap)
            {
                var last = flips.Skip(Math.Max(0, flips.Count - 3)).SelectMany(f => f).Distinct().Order().ToArray();
                throw new ActiveSetCyclingException(last.Select(b => model.BarIds[b]).ToArray(), it,
                    $"the linear analysis did not settle which one-sided bars are slack within {cap} solves (the cap for {k} one-sided bars); " +
                    $"bars {Names(model, last)} were still switching between taut and slack. Follow the load with the nonlinear trace, which resolves them step by step.");
            }
            foreach (int q in switched) active[oneSided[q]] = !active[oneSided[q]];
            hash = next;
            seen[hash] = it + 1;
        }
    }

    /// <summary>The beams' linear terms, or null for a model without beams (whose path then stays exactly the bar-only one).</summary>
    internal static BeamLinearTerms? Beams(StructuralModel model, Continuation.EquilibriumSystem sys) =>
        model.HasBeams ? new BeamLinearTerms(model, sys.Assembler) : null;

    private static string Names(StructuralModel model, IEnumerable<int> bars)
    {
        var ids = bars.Select(b => $"'{model.BarIds[b]}'").ToList();
        return ids.Count <= 10 ? string.Join(", ", ids) : string.Join(", ", ids.Take(10)) + $" and {ids.Count - 10} more";
    }

    /// <summary>Linear strain e·(u_j − u_i)/L0 of a bar.</summary>
    private static double LinearStrain(StructuralModel m, ReadOnlySpan<double> u, int b)
    {
        int i = 3 * m.BarStart[b], j = 3 * m.BarEnd[b];
        int di = m.Dofs.Offset[m.BarStart[b]], dj = m.Dofs.Offset[m.BarEnd[b]];
        double L0 = m.BarLength[b], ext = 0;
        for (int c = 0; c < 3; c++) ext += (m.Coordinates[j + c] - m.Coordinates[i + c]) / L0 * (u[dj + c] - u[di + c]);
        return ext / L0;
    }

    /// <summary>Solves on an already factorised K0 (shared with the buckling analysis); bars not <paramref name="active"/> carry nothing.</summary>
    internal static LinearStaticResult Solve(StructuralModel model, Continuation.EquilibriumSystem sys, double loadFactor, bool includeConstant, bool withPrescribed,
        bool[]? active = null, BeamLinearTerms? beams = null)
    {
        int full = model.Dofs.FullCount;
        var u = withPrescribed ? (double[])model.PrescribedDisplacement.Clone() : new double[full];
        var load = new double[full];
        for (int d = 0; d < full; d++) load[d] = (includeConstant ? model.ConstantLoad[d] : 0) + loadFactor * model.ReferenceLoad[d];
        // Right-hand side F_f − (K u_p)_f − f0_f, where f0 is the internal force of the initial stresses at u = 0.
        var f = new double[full];
        LinearInternalForce(model, u, f, includePrestress: withPrescribed, active: active, beams: beams);
        var rhs = new double[sys.FreeCount];
        var fullOf = model.Dofs.FullOf;
        for (int e = 0; e < rhs.Length; e++) rhs[e] = load[fullOf[e]] - f[fullOf[e]];
        sys.Factor.Solve(rhs);
        // Small displacements add, rotations included (no composition: the rotations are small angles here); without
        // rotating nodes this is the configuration update the bar-only analysis always used.
        if (beams is null) sys.AddFree(u, rhs);
        else for (int e = 0; e < rhs.Length; e++) u[fullOf[e]] += rhs[e];
        var forces = new double[model.BarCount];
        LinearInternalForce(model, u, f, includePrestress: withPrescribed, barForces: forces, active: active, beams: beams);
        var reactions = new double[full];
        var eq = model.Dofs.EquationOf;
        for (int d = 0; d < full; d++) if (eq[d] < 0) reactions[d] = f[d] - load[d];
        return new LinearStaticResult(loadFactor, u, forces, reactions) { BeamEndForces = beams?.EndForces(u) ?? [] };
    }

    /// <summary>
    /// Linearised internal force K0·u + f0 of bars and springs: for a bar, N = S0·A + (EA/L0) e·Δu along e, plus the
    /// initial-stress term (S0 A/L0)·Δu that matches the geometric part of K0; for a beam, K_e(0)·u_e.
    /// </summary>
    internal static void LinearInternalForce(StructuralModel m, ReadOnlySpan<double> u, Span<double> f, bool includePrestress, Span<double> barForces = default,
        bool[]? active = null, BeamLinearTerms? beams = null)
    {
        f.Clear();
        Span<double> e = stackalloc double[3];
        Span<double> du = stackalloc double[3];
        for (int b = 0; b < m.BarCount; b++)
        {
            if (active is not null && !active[b])
            {
                if (!barForces.IsEmpty) barForces[b] = 0;
                continue;
            }
            int i = 3 * m.BarStart[b], j = 3 * m.BarEnd[b];
            int di = m.Dofs.Offset[m.BarStart[b]], dj = m.Dofs.Offset[m.BarEnd[b]];
            double L0 = m.BarLength[b], A = m.BarArea[b], s0 = includePrestress ? m.BarInitialStress[b] : 0.0;
            double ext = 0;
            for (int k = 0; k < 3; k++)
            {
                e[k] = (m.Coordinates[j + k] - m.Coordinates[i + k]) / L0;
                du[k] = u[dj + k] - u[di + k];
                ext += e[k] * du[k];
            }
            double n = s0 * A + m.BarModulus[b] * A / L0 * ext;
            if (!barForces.IsEmpty) barForces[b] = n;
            double g = m.BarInitialStress[b] * A / L0;
            for (int k = 0; k < 3; k++)
            {
                double t = n * e[k] + g * du[k];
                f[di + k] -= t;
                f[dj + k] += t;
            }
        }
        Elements.SpringForces.AddInternalForce(m, u, f);
        beams?.AddInternalForce(u, f);
    }
}
