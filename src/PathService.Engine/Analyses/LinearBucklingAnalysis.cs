using MathNet.Numerics.LinearAlgebra;
using PathService.Engine.Assembly;
using PathService.Engine.Continuation;
using PathService.Engine.Model;
using PathService.Engine.Sparse;
using PathService.Engine.Stability;

namespace PathService.Engine.Analyses;

/// <summary>A linearised buckling mode: critical load factor μ (on the reference load), mode (3 per node, largest component 1).</summary>
public sealed record BucklingMode(int Number, double LoadFactor, double[] Shape, double LoadAlignment);

public sealed record LinearBucklingResult(IReadOnlyList<BucklingMode> Modes, int Iterations, bool Converged);

/// <summary>
/// Linearised (classical) buckling: (K_A + μ K_σ) φ = 0, where K_A is the tangent at the undeformed state plus the
/// geometric stiffness of the linear stresses under the constant load, and K_σ the geometric stiffness of the linear
/// stresses under the reference load. The lowest positive μ are found by subspace iteration with Rayleigh-Ritz
/// (K.-J. Bathe, "Finite Element Procedures", 1996, §11.6 (from memory)) on θ = 1/μ of −K_σ φ = θ K_A φ, using the sparse LDLᵀ of K_A.
/// It ignores the change of geometry before buckling, which is why it can overestimate a snap-through load badly.
/// With beams present, the beams' part of K_σ (and of the constant-load part of K_A) is the change of their tangent along
/// the linear state, [K_T(h u) − K_T(−h u)]/(2h) (<see cref="BeamLinearTerms.GeometricStiffness"/>), the bars' part their
/// explicit stress block as without beams; for the corotational beam that is the
/// chord's N/l per element, so a member's own buckling needs subdivision (theory §15.1 "Linear analyses with beams").
/// Without beams the bars' explicit K_σ from their linear stresses is used, unchanged.
/// Cancelling the token stops it within one solve with <see cref="OperationCanceledException"/>.
/// </summary>
public static class LinearBucklingAnalysis
{
    public static LinearBucklingResult Run(StructuralModel model, int modeCount = 3, int maxIterations = 200, double tolerance = 1e-10,
        double singularPivotRatio = 1e-11, OrderingMethod ordering = OrderingMethod.Automatic, CancellationToken ct = default)
    {
        if (modeCount < 1) throw new ArgumentOutOfRangeException(nameof(modeCount), "at least one mode must be requested");
        ct.ThrowIfCancellationRequested();
        var sys = new EquilibriumSystem(model, singularPivotRatio, ordering);
        ct.ThrowIfCancellationRequested();
        var zero = new double[model.Dofs.FullCount];
        MechanismDetector.ThrowIfSingular(sys, sys.Refactor(zero));
        var beams = LinearStaticAnalysis.Beams(model, sys);
        var (kA, kS) = beams is null ? BarOperators(model, sys, zero) : DifferenceOperators(model, sys, beams);
        kA.CopyTo(sys.Values, 0);
        ct.ThrowIfCancellationRequested();
        var status = sys.Factor.Factorize(sys.Values, singularPivotRatio);
        if (status == LdlStatus.ZeroPivot || sys.Factor.NegativePivotCount > 0)
            throw new AnalysisInputException("UNSTABLE_START", "model", "the structure is already unstable under the constant load (its tangent is not positive definite), so a linearised buckling load is not defined");
        return Iterate(model, sys, kS, modeCount, maxIterations, tolerance, ct);
    }

    /// <summary>K_A and K_σ of a model without beams: the bars' geometric stiffness from their linear stresses.</summary>
    private static (double[] KA, double[] KS) BarOperators(StructuralModel model, EquilibriumSystem sys, double[] zero)
    {
        var asm = sys.Assembler;
        // Linear stresses under the reference load and (if any) under the constant part.
        var refResult = LinearStaticAnalysis.Solve(model, sys, 1.0, includeConstant: false, withPrescribed: false);
        var sRef = new double[model.BarCount];
        for (int b = 0; b < model.BarCount; b++) sRef[b] = refResult.BarForces[b] / model.BarArea[b];
        var kA = (double[])sys.Values.Clone();
        if (model.HasConstantLoad || model.HasPrescribedDisplacements || model.HasInitialStress)
        {
            var constResult = LinearStaticAnalysis.Solve(model, sys, 0.0, includeConstant: true, withPrescribed: true);
            var dS = new double[model.BarCount];
            for (int b = 0; b < model.BarCount; b++) dS[b] = constResult.BarForces[b] / model.BarArea[b] - model.BarInitialStress[b];
            var kc = new double[kA.Length];
            asm.Tangent(zero, kc, TangentParts.GeometricOnly, dS);
            for (int i = 0; i < kA.Length; i++) kA[i] += kc[i];
        }
        var kS = new double[kA.Length];
        asm.Tangent(zero, kS, TangentParts.GeometricOnly, sRef);
        return (kA, kS);
    }

    /// <summary>K_A and K_σ of a model with beams: the change of the tangent along the linear states (element-agnostic).</summary>
    private static (double[] KA, double[] KS) DifferenceOperators(StructuralModel model, EquilibriumSystem sys, BeamLinearTerms beams)
    {
        var refResult = LinearStaticAnalysis.Solve(model, sys, 1.0, includeConstant: false, withPrescribed: false, beams: beams);
        var kA = (double[])sys.Values.Clone();
        var kS = new double[kA.Length];
        var sRef = new double[model.BarCount];
        for (int b = 0; b < model.BarCount; b++) sRef[b] = refResult.BarForces[b] / model.BarArea[b];
        beams.GeometricStiffness(refResult.Displacements, sRef, kS);
        if (model.HasConstantLoad || model.HasPrescribedDisplacements || model.HasInitialStress)
        {
            // The constant state's own change of tangent; the bars' initial stress is already in K0 (at rest).
            var constResult = LinearStaticAnalysis.Solve(model, sys, 0.0, includeConstant: true, withPrescribed: true, beams: beams);
            var kc = new double[kA.Length];
            var dS = new double[model.BarCount];
            for (int b = 0; b < model.BarCount; b++) dS[b] = constResult.BarForces[b] / model.BarArea[b] - model.BarInitialStress[b];
            beams.GeometricStiffness(constResult.Displacements, dS, kc);
            for (int i = 0; i < kA.Length; i++) kA[i] += kc[i];
        }
        return (kA, kS);
    }

    /// <summary>Subspace iteration on θ = 1/μ of −K_σ φ = θ K_A φ, with K_A factorised in <paramref name="sys"/>.</summary>
    private static LinearBucklingResult Iterate(StructuralModel model, EquilibriumSystem sys, double[] kS, int modeCount, int maxIterations,
        double tolerance, CancellationToken ct)
    {
        var asm = sys.Assembler;
        int n = sys.FreeCount;

        int q = Math.Min(n, Math.Max(2 * modeCount, modeCount + 8));
        int p = Math.Min(modeCount, n);
        var X = Matrix<double>.Build.Dense(n, q);
        var rng = new Random(2024);
        for (int j = 0; j < q; j++)
            for (int i = 0; i < n; i++) X[i, j] = j == 0 ? sys.ReferenceFree[i] + 1e-3 * (rng.NextDouble() - 0.5) : rng.NextDouble() - 0.5;

        var col = new double[n];
        var bx = new double[n];
        var Y = Matrix<double>.Build.Dense(n, q);
        var BX = Matrix<double>.Build.Dense(n, q);
        var BY = Matrix<double>.Build.Dense(n, q);
        double[] theta = new double[q], previous = new double[q];
        bool converged = false;
        int it;
        for (it = 1; it <= maxIterations; it++)
        {
            // Y = K_A⁻¹ (−K_σ X); the caller's token is checked before each of the q solves.
            for (int j = 0; j < q; j++)
            {
                ct.ThrowIfCancellationRequested();
                for (int i = 0; i < n; i++) col[i] = X[i, j];
                asm.Multiply(kS, col, bx);
                for (int i = 0; i < n; i++) { bx[i] = -bx[i]; BX[i, j] = bx[i]; }
                sys.Factor.Solve(bx);
                for (int i = 0; i < n; i++) Y[i, j] = bx[i];
            }
            for (int j = 0; j < q; j++)
            {
                for (int i = 0; i < n; i++) col[i] = Y[i, j];
                asm.Multiply(kS, col, bx);
                for (int i = 0; i < n; i++) BY[i, j] = -bx[i];
            }
            // Rayleigh-Ritz: Ā = Yᵀ K_A Y = Yᵀ(−K_σ X), C̄ = Yᵀ(−K_σ)Y; C̄ z = θ Ā z.
            var aBar = Y.TransposeThisAndMultiply(BX);
            var cBar = Y.TransposeThisAndMultiply(BY);
            aBar = 0.5 * (aBar + aBar.Transpose());
            cBar = 0.5 * (cBar + cBar.Transpose());
            // Ā is positive semi-definite; where K_σ has a null space (bars unstressed by the reference load) some
            // columns of Y vanish and Ā is singular, so reduce by its eigenvectors and keep the well-conditioned part:
            // T = V Λ^(-1/2) gives Tᵀ Ā T = I over the retained directions.
            var aEvd = aBar.Evd(Symmetricity.Symmetric);
            double aMax = aEvd.EigenValues.Max(e => e.Real);
            var keep = Enumerable.Range(0, q).Where(k => aEvd.EigenValues[k].Real > 1e-12 * aMax).ToArray();
            if (keep.Length == 0 || !(aMax > 0))
                throw new AnalysisInputException("NO_GEOMETRIC_STIFFNESS", "load_case.reference", "the reference load produces no geometric stiffness, so there is no linearised buckling load");
            var T = Matrix<double>.Build.Dense(q, keep.Length, (i, j) => aEvd.EigenVectors[i, keep[j]] / Math.Sqrt(aEvd.EigenValues[keep[j]].Real));
            var m = T.TransposeThisAndMultiply(cBar) * T;
            m = 0.5 * (m + m.Transpose());
            var evd = m.Evd(Symmetricity.Symmetric);
            int r = keep.Length;
            var order = Enumerable.Range(0, r).OrderByDescending(k => evd.EigenValues[k].Real).ToArray();
            var Xn = Y * (T * evd.EigenVectors);
            for (int k = 0; k < q; k++)
            {
                if (k < r)
                {
                    theta[k] = evd.EigenValues[order[k]].Real;
                    var v = Xn.Column(order[k]);
                    X.SetColumn(k, v / v.AbsoluteMaximum());
                }
                else
                {
                    // Refill the lost directions with fresh random vectors so the subspace keeps its size.
                    theta[k] = double.NegativeInfinity;
                    for (int i = 0; i < n; i++) X[i, k] = rng.NextDouble() - 0.5;
                }
            }
            bool done = it > 1;
            for (int k = 0; k < p; k++)
                if (!(Math.Abs(theta[k] - previous[k]) <= tolerance * Math.Abs(theta[k]))) done = false;
            Array.Copy(theta, previous, q);
            if (done || q == n) { converged = true; break; }
        }

        var modes = new List<BucklingMode>();
        for (int k = 0; k < q && modes.Count < p; k++)
        {
            if (!(theta[k] > 0)) break;
            var free = X.Column(k).ToArray();
            var shape = new double[model.Dofs.FullCount];
            model.Dofs.Scatter(free, shape);
            double peak = shape.MaxBy(Math.Abs);
            if (peak != 0) for (int i = 0; i < shape.Length; i++) shape[i] /= peak;
            double align = Math.Abs(EquilibriumSystem.Dot(free, sys.ReferenceFree)) /
                           Math.Sqrt(EquilibriumSystem.Dot(free, free) * sys.ReferenceNormSquared);
            modes.Add(new BucklingMode(modes.Count + 1, 1.0 / theta[k], shape, align));
        }
        return new LinearBucklingResult(modes, Math.Min(it, maxIterations), converged);
    }
}
