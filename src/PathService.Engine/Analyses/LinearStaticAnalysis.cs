using PathService.Engine.Assembly;
using PathService.Engine.Model;
using PathService.Engine.Sparse;
using PathService.Engine.Stability;

namespace PathService.Engine.Analyses;

/// <summary>Small-displacement solution K0 u = F: displacements (3 per node), bar forces (tension positive), reactions.</summary>
public sealed record LinearStaticResult(double LoadFactor, double[] Displacements, double[] BarForces, double[] Reactions);

/// <summary>
/// Classical linear analysis at one load level F = F_const + λ·F_ref (λ = 1 by default): small displacements, linear
/// axial strain ε = e·(u_j − u_i)/L0 with e the initial unit chord. K0 is the tangent at the undeformed state (material
/// part plus the geometric part of any initial stress), so a prestressed cable net is handled. The comparison every
/// engineer knows, and the start of the linearised buckling analysis.
/// </summary>
public static class LinearStaticAnalysis
{
    public static LinearStaticResult Run(StructuralModel model, double loadFactor = 1.0, bool includeConstant = true,
        double tinyPivotRatio = 1e-11, OrderingMethod ordering = OrderingMethod.Automatic, CancellationToken ct = default)
    {
        // The token is checked between the expensive parts (ordering, factorisation); it throws OperationCanceledException.
        ct.ThrowIfCancellationRequested();
        var sys = new Continuation.EquilibriumSystem(model, tinyPivotRatio, ordering);
        var u0 = new double[3 * model.NodeCount];
        ct.ThrowIfCancellationRequested();
        var status = sys.Refactor(u0);
        ct.ThrowIfCancellationRequested();
        MechanismDetector.ThrowIfSingular(sys, status);
        return Solve(model, sys, loadFactor, includeConstant, withPrescribed: true);
    }

    /// <summary>Solves on an already factorised K0 (shared with the buckling analysis).</summary>
    internal static LinearStaticResult Solve(StructuralModel model, Continuation.EquilibriumSystem sys, double loadFactor, bool includeConstant, bool withPrescribed)
    {
        int full = 3 * model.NodeCount;
        var u = withPrescribed ? (double[])model.PrescribedDisplacement.Clone() : new double[full];
        var load = new double[full];
        for (int d = 0; d < full; d++) load[d] = (includeConstant ? model.ConstantLoad[d] : 0) + loadFactor * model.ReferenceLoad[d];
        // Right-hand side F_f − (K u_p)_f − f0_f, where f0 is the internal force of the initial stresses at u = 0.
        var f = new double[full];
        LinearInternalForce(model, u, f, includePrestress: withPrescribed);
        var rhs = new double[sys.FreeCount];
        var fullOf = model.Dofs.FullOf;
        for (int e = 0; e < rhs.Length; e++) rhs[e] = load[fullOf[e]] - f[fullOf[e]];
        sys.Factor.Solve(rhs);
        sys.AddFree(u, rhs);
        var forces = new double[model.BarCount];
        LinearInternalForce(model, u, f, includePrestress: withPrescribed, barForces: forces);
        var reactions = new double[full];
        var eq = model.Dofs.EquationOf;
        for (int d = 0; d < full; d++) if (eq[d] < 0) reactions[d] = f[d] - load[d];
        return new LinearStaticResult(loadFactor, u, forces, reactions);
    }

    /// <summary>
    /// Linearised internal force K0·u + f0 of bars and springs: for a bar, N = S0·A + (EA/L0) e·Δu along e, plus the
    /// initial-stress term (S0 A/L0)·Δu that matches the geometric part of K0.
    /// </summary>
    internal static void LinearInternalForce(StructuralModel m, ReadOnlySpan<double> u, Span<double> f, bool includePrestress, Span<double> barForces = default)
    {
        f.Clear();
        Span<double> e = stackalloc double[3];
        Span<double> du = stackalloc double[3];
        for (int b = 0; b < m.BarCount; b++)
        {
            int i = 3 * m.BarStart[b], j = 3 * m.BarEnd[b];
            double L0 = m.BarLength[b], A = m.BarArea[b], s0 = includePrestress ? m.BarInitialStress[b] : 0.0;
            double ext = 0;
            for (int k = 0; k < 3; k++)
            {
                e[k] = (m.Coordinates[j + k] - m.Coordinates[i + k]) / L0;
                du[k] = u[j + k] - u[i + k];
                ext += e[k] * du[k];
            }
            double n = s0 * A + m.BarModulus[b] * A / L0 * ext;
            if (!barForces.IsEmpty) barForces[b] = n;
            double g = m.BarInitialStress[b] * A / L0;
            for (int k = 0; k < 3; k++)
            {
                double t = n * e[k] + g * du[k];
                f[i + k] -= t;
                f[j + k] += t;
            }
        }
        Elements.SpringForces.AddInternalForce(m, u, f);
    }
}
