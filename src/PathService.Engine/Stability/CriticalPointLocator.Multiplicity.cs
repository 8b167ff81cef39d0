using PathService.Engine.Continuation;
using PathService.Engine.Sparse;

namespace PathService.Engine.Stability;

/// <summary>Evidence for a claimed multiplicity, and a split trial as the end of each part of its bracket.</summary>
internal sealed partial class CriticalPointLocator
{
    /// <summary>Multiplicities up to this are confirmed from the k eigenpairs nearest zero (block inverse iteration, which
    /// the modes need anyway); larger ones, or a failed check, by the inertia of trials on both sides of the root.</summary>
    private const int BlockCheckLimit = 4;

    /// <summary>Iterations of the block eigenpairs that <see cref="CheckMultiplicity"/> spends before leaving the decision to the inertia.</summary>
    private const int CheckIterations = 8;

    /// <summary>Forced evidence trials per bracket before a multiple point is reported as not located.</summary>
    private const int MaxEvidenceTrials = 6;

    /// <summary>
    /// Whether the k = |Δcount| crossings of the bracket [lo, hi] lie within the asked tolerance of the located root
    /// (best): by inertia, when both ends' λ lie within it (Sylvester's law of inertia: the count of negative pivots is
    /// the count of negative eigenvalues); or, for k ≤ <see cref="BlockCheckLimit"/>, from the k eigenpairs nearest zero
    /// at the factorised trial F, each of whose Newton roots t_F − μ_j/μ'_j must fall within the tolerance of best (the
    /// same first-order estimate the location itself rests on). Otherwise the t of an evidence trial just past the root
    /// (a tenth of the tolerance) toward the end farther from it in λ: its count either closes the bracket there or
    /// splits it, so that distinct crossings close together are separated rather than reported as one.
    /// </summary>
    private (bool Confirmed, double[][]? Modes, double Mu, double? Next) CheckMultiplicity(State best, State lo, State hi)
    {
        int k = Math.Abs(hi.Count - lo.Count);
        double tolAbs = controls.CriticalPointTolerance * Math.Max(1.0, Math.Abs(best.Lambda));
        if (Math.Abs(lo.Lambda - best.Lambda) <= tolAbs && Math.Abs(hi.Lambda - best.Lambda) <= tolAbs) return (true, null, 0, null);
        var f = _factored;
        if (k <= BlockCheckLimit && f is not null && (f == best || f == best.Origin) && f.PathTangent is not null
            && double.IsFinite(f.LambdaRate) && sys.Factor.Status != LdlStatus.ZeroPivot)
        {
            // Bounded in iterations: next to a cluster of crossings the subspace converges slowly (the next eigenvalues are
            // almost as small), and one evidence trial's factorisation costs less than many block iterations; the inertia
            // then decides.
            var (values, vectors, converged) = NearNullMode.ComputeBlock(sys, k, best.Mode, null, CheckIterations, 1e-10, _blockAbsolute);
            if (converged)
            {
                var rates = ModeRates(f, vectors);
                bool all = true;
                for (int j = 0; j < k && all; j++)
                {
                    double lambda = f.Lambda - f.LambdaRate * values[j] / rates[j];
                    all = double.IsFinite(lambda) && Math.Abs(lambda - best.Lambda) <= tolAbs;
                }
                if (all) return (true, vectors, values[0], null);
            }
        }
        var far = Math.Abs(lo.Lambda - best.Lambda) >= Math.Abs(hi.Lambda - best.Lambda) ? lo : hi;
        double rate = double.IsFinite(best.LambdaRate) && best.LambdaRate != 0 ? best.LambdaRate : (hi.Lambda - lo.Lambda) / (hi.T - lo.T);
        double step = 0.1 * tolAbs / Math.Abs(rate);
        double t = best.T + Math.Sign(far.T - best.T) * step;
        if (!double.IsFinite(t) || !(t > lo.T && t < hi.T)) t = 0.5 * (best.T + far.T);
        return (false, null, 0, t > lo.T && t < hi.T && t != best.T ? t : null);
    }

    /// <summary>μ'_j = φ_jᵀ(dK/dt)φ_j of several unit modes at a factorised state, from one pair of tangents at u ± h u'.</summary>
    private double[] ModeRates(State f, double[][] modes)
    {
        var rates = new double[modes.Length];
        foreach (double h in new[] { RateStep, -RateStep })
        {
            Array.Copy(f.U, _uh, _uh.Length);
            sys.AddFree(_uh, f.PathTangent!, h);
            sys.Assembler.Tangent(_uh, _kv);
            for (int j = 0; j < modes.Length; j++)
            {
                sys.Assembler.Multiply(_kv, modes[j], _kphi);
                rates[j] += Math.Sign(h) * EquilibriumSystem.Dot(modes[j], _kphi) / (2 * RateStep);
            }
        }
        return rates;
    }

    /// <summary>The trial as an end of the bracket with counts (countLo, countHi): its eigenpair re-picked with the sign
    /// of that bracket's crossing when it has the other sign (the trial's factorisation must be in place). At the Lanczos
    /// default tolerance (10⁻⁶), not the bracket ends' 10⁻³: inside the dense clusters of the m = 120 bench roof the looser
    /// pair sent the next trials astray (206 instead of 119 factorisations and one more cut over 11 points).</summary>
    private State ForBracket(State trial, int countLo, int countHi)
    {
        int sign = CrossingSign(trial.Count, countLo, countHi);
        if (sign == 0 || Math.Sign(trial.Mu) == sign || _factored != trial) return trial;
        var (mu, mode, found) = NearNullMode.NearestOfSign(sys, sign, trial.Mode, _basis);
        if (!found) return trial;
        var s = new State(trial.T, trial.U, trial.Lambda, trial.Count, mu, mode, trial.Slope)
        {
            LambdaRate = trial.LambdaRate, PathTangent = trial.PathTangent,
        };
        if (trial.PathTangent is not null)
        {
            double muRate = (ModeStiffness(s.U, trial.PathTangent, RateStep, mode) - ModeStiffness(s.U, trial.PathTangent, -RateStep, mode)) / (2 * RateStep);
            if (double.IsFinite(muRate)) s.MuRate = muRate;
        }
        _factored = s; // the same factorisation; the modified Newton of the next trial uses it
        return s;
    }
}
