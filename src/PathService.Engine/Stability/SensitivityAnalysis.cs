using PathService.Engine.Continuation;
using PathService.Engine.Elements;
using PathService.Engine.Model;
using PathService.Engine.Sparse;

namespace PathService.Engine.Stability;

/// <summary>
/// Design sensitivity of a located critical point (derivations in docs/theory.md, "Sensitivity of the critical load").
///
/// Limit point. Along the set of limit points r(u(p), λ(p), p) = 0 with K φ = 0; differentiating the equilibrium and
/// multiplying by φᵀ removes du/dp (φᵀK = 0), so dλ_c/dp = φᵀ ∂r/∂p / (φᵀ F_ref): one contraction of the element
/// derivatives with φ and no factorisation (e.g. Z. Mróz and R. T. Haftka, "Design sensitivity analysis of non-linear
/// structures in regular and critical states", Int. J. Solids Struct. 31, 1994 (from memory); the same formula is
/// the first step of K. K. Choi and N.-H. Kim, "Structural Sensitivity Analysis and Optimization", Springer 2005 (from memory)).
///
/// Bifurcation. φᵀF_ref = 0 there, so that quotient is 0/0. λ_c is instead where the eigenvalue μ = φᵀK(u_f(λ, p), p)φ
/// along the fundamental path u_f crosses zero: dλ_c/dp = −(∂μ/∂p)/(∂μ/∂λ), with ∂μ/∂λ = gᵀ u_f,λ and
/// ∂μ/∂p = φᵀK_pφ + gᵀ u_f,p, where g = ∇_u(φᵀKφ), K u_f,λ = F_ref and K u_f,p = −∂r/∂p. One adjoint solve a = K⁺g
/// (in the complement of the critical modes, where K is regular) turns every parameter's term into a contraction:
///     dλ_c/dp = −(φᵀK_pφ − aᵀ∂r/∂p) / (aᵀF_ref).
/// The fundamental path's tangent is taken without a component along φ, which holds where the bifurcation breaks a
/// symmetry of the fundamental path (the usual case). A change whose residual change does work on φ (φᵀ∂r/∂p ≠ 0)
/// breaks that symmetry: it is flagged in <see cref="CriticalLoadSensitivity.Breaks"/>. For a point of multiplicity k
/// the derivative is that of the mean of the k coalescing eigenvalues, (1/k)Σφ_iᵀKφ_i with orthonormal modes: the
/// individual λ are not differentiable there, the mean is.
/// </summary>
internal static class SensitivityAnalysis
{
    /// <summary>Relative size of φᵀ∂r/∂p (against the parameter's residual change) above which a change breaks the bifurcation.</summary>
    private const double BreakingRatio = 1e-6;

    /// <param name="u">Full displacement vector at the critical point.</param>
    /// <param name="modesFree">Critical mode(s) on the free DOFs; orthonormalised here.</param>
    /// <param name="factorAtU">True when the system's factorisation is the tangent at <paramref name="u"/> (saves one).</param>
    [System.Runtime.CompilerServices.MethodImpl(System.Runtime.CompilerServices.MethodImplOptions.AggressiveOptimization)]
    public static CriticalLoadSensitivity Compute(EquilibriumSystem sys, double[] u, double lambda, IReadOnlyList<double[]> modesFree,
        CriticalPointKind kind, bool factorAtU)
    {
        var m = sys.Model;
        int k = modesFree.Count;
        var method = kind == CriticalPointKind.LimitPoint ? SensitivityMethod.LimitPoint : SensitivityMethod.ZeroEigenvalue;
        if (k == 0) return CriticalLoadSensitivity.Undefined(method, 0, "no critical mode was given");
        // Without member laws no bar can yield or go slack: the checks are skipped.
        for (int b = 0; b < (m.HasMemberLaws ? m.BarCount : 0); b++)
        {
            var state = BarKinematics.Evaluate(m, u, b, sys.Assembler.PlasticStrain[b]);
            if (state.Regime == BarRegime.Yielding || sys.Assembler.PlasticStrain[b] != 0)
                return CriticalLoadSensitivity.Undefined(method, k, $"bar '{m.BarIds[b]}' has yielded before the critical point: the critical load then depends on the loading history and has no derivative of this kind");
        }
        var modes = Orthonormal(modesFree);
        var phiFull = modes.Select(p => Full(m, p)).ToList();
        var (constantFactor, referenceFactor) = SelfWeightFactors(m.Definition);
        double selfWeight = constantFactor + lambda * referenceFactor;

        // One team for both bar passes (the gradient before the adjoint solve and the derivatives after it).
        var team = new WorkerTeam(Environment.ProcessorCount);
        double[] wFull; // the vector the residual derivatives are contracted with
        double denominator;
        if (method == SensitivityMethod.LimitPoint)
        {
            wFull = phiFull[0];
            denominator = EquilibriumSystem.Dot(modes[0], sys.ReferenceFree);
            double scale = Math.Sqrt(sys.ReferenceNormSquared);
            if (Math.Abs(denominator) <= 1e-12 * scale)
                return CriticalLoadSensitivity.Undefined(method, k, "the critical mode does no work on the reference load (φᵀF_ref = 0): not a limit point");
        }
        else
        {
            if (!factorAtU && sys.Refactor(u) == LdlStatus.ZeroPivot)
                return CriticalLoadSensitivity.Undefined(method, k, "the tangent at the critical point has an exactly zero pivot; the adjoint solve is not possible there");
            var g = new double[sys.FreeCount];
            var gFull = new double[3 * m.NodeCount];
            // ∇_u(φᵀKφ) per bar on the team's threads, summed into nodes in bar order (independent of the thread count).
            var gradient = new GradientPass(m, u, phiFull, sys.Assembler.PlasticStrain, team);
            team.Run(gradient, team.Threads);
            for (int b = 0; b < m.BarCount; b++)
            {
                int i = m.BarStart[b], j = m.BarEnd[b];
                for (int c = 0; c < 3; c++)
                {
                    gFull[3 * j + c] += gradient.PerBar[3 * b + c];
                    gFull[3 * i + c] -= gradient.PerBar[3 * b + c];
                }
            }
            m.Dofs.Gather(gFull, g);
            Project(g, modes);
            sys.Factor.Solve(g);
            Project(g, modes);
            wFull = Full(m, g);
            denominator = EquilibriumSystem.Dot(g, sys.ReferenceFree);
            double scale = Math.Sqrt(EquilibriumSystem.Dot(g, g) * sys.ReferenceNormSquared);
            if (!(Math.Abs(denominator) > 1e-12 * scale))
                return CriticalLoadSensitivity.Undefined(method, k, "the critical eigenvalue does not change along the fundamental path (aᵀF_ref = 0): the crossing is not transversal");
        }

        bool bifurcation = method == SensitivityMethod.ZeroEigenvalue;
        double phiMax = MaxAbs(phiFull[0]);
        // The bars are independent: each participant of the team evaluates a contiguous range and writes per-bar slots;
        // the node sums are then made in bar order on this thread, so results do not depend on the thread count.
        var pass = new BarPass(m, u, phiFull, wFull, denominator, selfWeight, bifurcation, phiMax, team);
        team.Run(pass, team.Threads);
        var coords = new double[3 * m.NodeCount];
        var modeWorkCoord = new double[3 * m.NodeCount];
        var sizeCoord = new double[3 * m.NodeCount];
        for (int b = 0; b < m.BarCount; b++)
        {
            for (int e = 0; e < 6; e++)
            {
                int dof = 3 * (e < 3 ? m.BarStart[b] : m.BarEnd[b]) + e % 3;
                coords[dof] += pass.Coordinates[6 * b + e];
                modeWorkCoord[dof] += pass.ModeWork[6 * b + e];
                sizeCoord[dof] += pass.ChangeSize[6 * b + e];
            }
        }
        var (area, modulus, volume, barBreaks) = (pass.Area, pass.Modulus, pass.Volume, pass.Breaks);

        var ground = new double[m.GroundSpringStiffness.Length];
        var groundBreaks = new bool[ground.Length];
        for (int s = 0; s < ground.Length; s++)
        {
            int dof = m.GroundSpringDof[s];
            ground[s] = bifurcation
                ? -(phiFull.Sum(p => p[dof] * p[dof]) / k - wFull[dof] * u[dof]) / denominator
                : wFull[dof] * u[dof] / denominator;
            groundBreaks[s] = bifurcation && Math.Abs(phiFull[0][dof] * u[dof]) > BreakingRatio * Math.Abs(u[dof]) * phiMax;
        }
        var link = new double[m.LinkSpringStiffness.Length];
        var linkBreaks = new bool[link.Length];
        for (int s = 0; s < link.Length; s++)
        {
            int a = m.LinkSpringStartDof[s], e = m.LinkSpringEndDof[s];
            double stretch = u[e] - u[a];
            link[s] = bifurcation
                ? -(phiFull.Sum(p => (p[e] - p[a]) * (p[e] - p[a])) / k - (wFull[e] - wFull[a]) * stretch) / denominator
                : (wFull[e] - wFull[a]) * stretch / denominator;
            linkBreaks[s] = bifurcation && Math.Abs((phiFull[0][e] - phiFull[0][a]) * stretch) > BreakingRatio * Math.Abs(stretch) * phiMax;
        }
        var nodeAxes = new string[m.NodeCount];
        for (int n = 0; n < m.NodeCount; n++)
        {
            string axes = "";
            for (int c = 0; c < 3 && bifurcation; c++)
            {
                int dof = 3 * n + c;
                if (modeWorkCoord[dof] > BreakingRatio * sizeCoord[dof] * phiMax && sizeCoord[dof] > 0) axes += "xyz"[c];
            }
            nodeAxes[n] = axes;
        }
        string note = bifurcation
            ? k > 1 ? $"multiple bifurcation ({k} modes): the individual critical loads are not differentiable; these are the derivatives of their mean" : "bifurcation: derivative of the zero crossing of the critical eigenvalue along the fundamental path"
            : "limit point";
        return new CriticalLoadSensitivity(true, note, method, k, area, modulus, volume, coords, ground, link,
            new SymmetryBreaks(barBreaks, nodeAxes, groundBreaks, linkBreaks));
    }

    /// <summary>
    /// The per-bar part of the sensitivities: for each bar its area, modulus and volume derivatives, its six end-coordinate
    /// derivatives, and at a bifurcation the mode's work on each change and the change's size (for the breaking flags).
    /// </summary>
    private sealed class BarPass(StructuralModel m, double[] u, List<double[]> phiFull, double[] wFull, double denominator,
        double selfWeight, bool bifurcation, double phiMax, WorkerTeam team) : ITeamWork
    {
        public readonly double[] Area = new double[m.BarCount], Modulus = new double[m.BarCount], Volume = new double[m.BarCount];
        public readonly bool[] Breaks = new bool[m.BarCount];
        public readonly double[] Coordinates = new double[6 * m.BarCount], ModeWork = new double[6 * m.BarCount], ChangeSize = new double[6 * m.BarCount];

        public void Execute(int participant)
        {
            // Participants split the bars into contiguous ranges; the count is read from the team before the run.
            int count = Math.Max(1, team.Participants);
            int from = (int)((long)m.BarCount * participant / count), to = (int)((long)m.BarCount * (participant + 1) / count);
            Span<double> force = stackalloc double[3 * BarDesignTerms.ParameterCount];
            Span<double> weight = stackalloc double[3 * BarDesignTerms.ParameterCount];
            Span<double> quadratic = stackalloc double[BarDesignTerms.ParameterCount];
            Span<double> meanQuadratic = stackalloc double[BarDesignTerms.ParameterCount];
            Span<double> contraction = stackalloc double[BarDesignTerms.ParameterCount];
            Span<double> phiBar = stackalloc double[6];
            Span<double> work = stackalloc double[BarDesignTerms.ParameterCount];
            Span<double> size = stackalloc double[BarDesignTerms.ParameterCount];
            var (gx, gy, gz) = m.Definition.Gravity;
            int k = phiFull.Count;
            for (int b = from; b < to; b++)
            {
                int i = m.BarStart[b], j = m.BarEnd[b];
                // A slack tension- or compression-only bar has no first-order effect.
                if (m.HasMemberLaws && BarKinematics.Evaluate(m, u, b, 0).Regime == BarRegime.Slack) continue;
                var bar = new BarDesignTerms.Bar(
                    m.Coordinates[3 * i], m.Coordinates[3 * i + 1], m.Coordinates[3 * i + 2], m.Coordinates[3 * j], m.Coordinates[3 * j + 1], m.Coordinates[3 * j + 2],
                    m.BarArea[b], m.BarModulus[b], m.BarInitialStress[b],
                    u[3 * j] - u[3 * i], u[3 * j + 1] - u[3 * i + 1], u[3 * j + 2] - u[3 * i + 2],
                    m.Definition.Bars[b].Density, selfWeight, gx, gy, gz);
                meanQuadratic.Clear();
                for (int q = 0; q < (bifurcation ? k : 1); q++)
                {
                    if (bifurcation) { Gather(phiFull[q], i, j, phiBar); BarDesignTerms.Derivatives(bar, phiBar, force, weight, quadratic, forces: q == 0); }
                    else BarDesignTerms.Derivatives(bar, [], force, weight, []);
                    if (bifurcation) for (int p = 0; p < BarDesignTerms.ParameterCount; p++) meanQuadratic[p] += quadratic[p] / k;
                }
                Contract(force, weight, wFull, i, j, contraction);
                for (int p = 0; p < BarDesignTerms.ParameterCount; p++)
                {
                    // Limit point: φᵀr_p / φᵀF_ref. Bifurcation: −(φᵀK_pφ − aᵀr_p) / aᵀF_ref.
                    double d = bifurcation ? -(meanQuadratic[p] - contraction[p]) / denominator : contraction[p] / denominator;
                    if (p == 0) Area[b] = d;
                    else if (p == 1) Modulus[b] = d;
                    else Coordinates[6 * b + p - 2] = d;
                }
                Volume[b] = Area[b] / m.BarLength[b];
                if (!bifurcation) continue;
                for (int p = 0; p < BarDesignTerms.ParameterCount; p++) size[p] = ResidualChangeSize(force, weight, p);
                bool breaks = false;
                for (int q = 0; q < k; q++)
                {
                    Contract(force, weight, phiFull[q], i, j, work);
                    // Any of the coalescing modes doing work on the change breaks the (multiple) bifurcation.
                    for (int p = 0; p < 2; p++) breaks |= Math.Abs(work[p]) > BreakingRatio * size[p] * phiMax;
                    for (int p = 2; p < BarDesignTerms.ParameterCount; p++)
                    {
                        ModeWork[6 * b + p - 2] += Math.Abs(work[p]) / k;
                        if (q == 0) ChangeSize[6 * b + p - 2] = size[p];
                    }
                }
                Breaks[b] = breaks;
            }
        }
    }

    /// <summary>wᵀ∂r/∂p for the bar's eight parameters: the internal force enters r with +, the self-weight with −.</summary>
    private static void Contract(ReadOnlySpan<double> force, ReadOnlySpan<double> weight, double[] w, int i, int j, Span<double> result)
    {
        for (int p = 0; p < BarDesignTerms.ParameterCount; p++)
        {
            double s = 0;
            for (int c = 0; c < 3; c++)
                s += (w[3 * j + c] - w[3 * i + c]) * force[3 * p + c] - (w[3 * i + c] + w[3 * j + c]) * weight[3 * p + c];
            result[p] = s;
        }
    }

    /// <summary>‖∂r/∂p‖ of one bar's contribution (both end nodes).</summary>
    private static double ResidualChangeSize(ReadOnlySpan<double> force, ReadOnlySpan<double> weight, int p)
    {
        double s = 0;
        for (int c = 0; c < 3; c++)
        {
            double f = force[3 * p + c], w = weight[3 * p + c];
            s += (f - w) * (f - w) + (f + w) * (f + w);
        }
        return Math.Sqrt(s);
    }

    /// <summary>
    /// ∇_u(φᵀKφ) of every elastic bar, the mean over the modes, as the end node's share per bar (the start node's is its
    /// negative); springs are linear and add nothing.
    /// </summary>
    private sealed class GradientPass(StructuralModel m, double[] u, List<double[]> modes, double[] plastic, WorkerTeam team) : ITeamWork
    {
        public readonly double[] PerBar = new double[3 * m.BarCount];

        public void Execute(int participant)
        {
            int count = Math.Max(1, team.Participants);
            int from = (int)((long)m.BarCount * participant / count), to = (int)((long)m.BarCount * (participant + 1) / count);
            double weight = 1.0 / modes.Count;
            for (int b = from; b < to; b++)
            {
                var s = BarKinematics.Evaluate(m, u, b, plastic[b]);
                if (s.TangentModulus == 0) continue;
                int i = m.BarStart[b], j = m.BarEnd[b];
                double l0 = m.BarLength[b];
                double stiffness = weight * s.TangentModulus * m.BarArea[b] / (l0 * l0 * l0);
                foreach (var phi in modes)
                {
                    var (x, y, z) = BarDesignTerms.QuadraticGradient(s.Dx, s.Dy, s.Dz, phi[3 * j] - phi[3 * i], phi[3 * j + 1] - phi[3 * i + 1], phi[3 * j + 2] - phi[3 * i + 2], stiffness);
                    PerBar[3 * b] += x; PerBar[3 * b + 1] += y; PerBar[3 * b + 2] += z;
                }
            }
        }
    }

    /// <summary>Sum of the self-weight factors of the combination's constant and reference parts.</summary>
    private static (double Constant, double Reference) SelfWeightFactors(ModelDefinition def)
    {
        if (def.Combination is not { } combo) return (0, 0);
        var selfWeight = def.LoadSets.Where(p => p.SelfWeight).Select(p => p.Name).ToHashSet(StringComparer.Ordinal);
        return (combo.Constant.Where(f => selfWeight.Contains(f.LoadSet)).Sum(f => f.Factor),
                combo.Reference.Where(f => selfWeight.Contains(f.LoadSet)).Sum(f => f.Factor));
    }

    private static List<double[]> Orthonormal(IReadOnlyList<double[]> vectors)
    {
        var result = new List<double[]>();
        foreach (var v in vectors)
        {
            var x = (double[])v.Clone();
            foreach (var q in result)
            {
                double c = EquilibriumSystem.Dot(x, q);
                for (int e = 0; e < x.Length; e++) x[e] -= c * q[e];
            }
            double n = Math.Sqrt(EquilibriumSystem.Dot(x, x));
            if (n == 0) continue;
            for (int e = 0; e < x.Length; e++) x[e] /= n;
            result.Add(x);
        }
        return result;
    }

    private static void Project(double[] x, List<double[]> modes)
    {
        foreach (var q in modes)
        {
            double c = EquilibriumSystem.Dot(x, q);
            for (int e = 0; e < x.Length; e++) x[e] -= c * q[e];
        }
    }

    private static double[] Full(StructuralModel m, double[] free)
    {
        var full = new double[3 * m.NodeCount];
        m.Dofs.Scatter(free, full);
        return full;
    }

    private static void Gather(double[] full, int i, int j, Span<double> bar)
    {
        for (int c = 0; c < 3; c++) { bar[c] = full[3 * i + c]; bar[3 + c] = full[3 * j + c]; }
    }

    private static double MaxAbs(double[] v) => v.Max(Math.Abs);
}
