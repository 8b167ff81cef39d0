using PathService.Engine.Elements;
using PathService.Engine.Model;

namespace PathService.Engine.Continuation;

public enum MemberEventKind
{
    /// <summary>The bar's stress reached its yield stress.</summary>
    Yield,
    /// <summary>The bar's compressive force reached its Euler load π²EI/(KL)².</summary>
    Buckle,
    /// <summary>A tension-only bar went slack (or a compression-only bar disengaged).</summary>
    Slack,
}

/// <summary>
/// The first time a bar yields, reaches its Euler load or goes slack along the path, reported after the converged
/// point where it was first seen. <paramref name="Utilization"/> is |S|/σy for yield and −N/N_E for buckling.
/// <paramref name="OnsetLoadFactor"/> estimates λ at the onset by linear interpolation of the governing quantity
/// between the previous point and this one (exact to second order in the step).
/// </summary>
public sealed record MemberEvent(MemberEventKind Kind, string BarId, int Point, double LoadFactor, double AxialForce, double Utilization,
    double OnsetLoadFactor) : PathEvent
{
    public int Branch { get; init; }
}

/// <summary>
/// Member checks along the path: axial stress against the yield stress, compression against the Euler load
/// N_E = π²EI/(KL0)² (L. Euler, 1744; effective length KL as in the design codes), and slackening of tension-only
/// bars. Each bar is reported once per kind, at most <see cref="MaxPerKind"/> bars per kind. The onset is found
/// where the governing quantity (linear in the displacements along the step's chord) passes zero; λ there is the
/// least-squares load factor of the internal force at that state, f_int(u*) − F_const ≈ λ F_ref, evaluated with the
/// material history before the event, so that a kink in the path at the event does not bias it.
/// </summary>
internal sealed class MemberMonitor(StructuralModel m, EquilibriumSystem sys)
{
    public const int MaxPerKind = 200;
    private readonly bool[][] _seen = [new bool[m.BarCount], new bool[m.BarCount], new bool[m.BarCount]];
    private readonly int[] _count = new int[3];
    // Governing quantities at the previous point (g < 0 before the event, g ≥ 0 at it) and its λ.
    private readonly double[][] _previous = [new double[m.BarCount], new double[m.BarCount], new double[m.BarCount]];
    private double _previousLambda = double.NaN;

    private readonly double[] _committedBefore = new double[m.BarCount];

    /// <summary>Keeps the material history of the previous point, for the elastic trial stresses of the next check.</summary>
    public void RememberHistory(ReadOnlySpan<double> u)
    {
        // Nothing to remember without member checks: keeps the hot path free of per-point copies.
        if (!m.HasMemberChecks) return;
        sys.Assembler.PlasticStrain.CopyTo(_committedBefore, 0);
        _previousU ??= new double[u.Length];
        u.CopyTo(_previousU);
    }

    private double[]? _previousU;

    /// <summary>Takes the branch's starting point as the previous point when nothing was checked yet.</summary>
    public void Start(double[] u, double lambda)
    {
        if (_previousU is not null || !m.HasMemberChecks) return;
        RememberHistory(u);
        _previousLambda = lambda;
    }

    public List<MemberEvent> Check(double[] u, int point, double lambda, int branch)
    {
        var uNow = u;
        var events = new List<MemberEvent>();
        if (!m.HasMemberChecks) return events;
        for (int b = 0; b < m.BarCount; b++)
        {
            var s = BarKinematics.Evaluate(m, u, b, sys.Assembler.PlasticStrain[b]);
            double n = BarKinematics.AxialForce(s, m.BarArea[b], m.BarLength[b]);
            // Elastic trial stress from the history before this point: what the bar would carry without yielding or slackening.
            double trial = m.BarModulus[b] * (s.Strain - _committedBefore[b]) + m.BarInitialStress[b];
            if (m.BarYieldStress[b] > 0)
                Report(MemberEventKind.Yield, b, n, Math.Abs(trial) / m.BarYieldStress[b] - 1, Math.Abs(s.Stress) / m.BarYieldStress[b], s.Regime == BarRegime.Yielding);
            if (m.BarSecondMoment[b] > 0)
            {
                double kl = m.BarEffectiveLengthFactor[b] * m.BarLength[b];
                double euler = Math.PI * Math.PI * m.BarModulus[b] * m.BarSecondMoment[b] / (kl * kl);
                Report(MemberEventKind.Buckle, b, n, -n / euler - 1, -n / euler, -n >= euler);
            }
            if (m.BarBehavior[b] != BarBehavior.Elastic)
                Report(MemberEventKind.Slack, b, n, m.BarBehavior[b] == BarBehavior.TensionOnly ? -trial : trial, 0, s.Regime == BarRegime.Slack);
        }
        _previousLambda = lambda;
        return events;

        double OnsetLoadFactor(double t, ReadOnlySpan<double> now)
        {
            if (_previousU is null) return lambda;
            var mid = new double[now.Length];
            for (int i = 0; i < mid.Length; i++) mid[i] = _previousU[i] + t * (now[i] - _previousU[i]);
            var f = new double[now.Length];
            sys.Assembler.InternalForce(mid, f);
            double num = 0;
            var full = m.Dofs.FullOf;
            for (int e = 0; e < full.Length; e++) num += sys.ReferenceFree[e] * (f[full[e]] - sys.ConstantFree[e]);
            return num / sys.ReferenceNormSquared;
        }

        void Report(MemberEventKind kind, int bar, double force, double governing, double utilization, bool happened)
        {
            int k = (int)kind;
            double before = _previous[k][bar];
            _previous[k][bar] = governing;
            if (!happened || _seen[k][bar] || _count[k] >= MaxPerKind) return;
            _seen[k][bar] = true;
            _count[k]++;
            double onset = lambda;
            if (double.IsFinite(_previousLambda) && before < 0 && governing >= 0 && governing > before)
                onset = OnsetLoadFactor(-before / (governing - before), uNow);
            events.Add(new MemberEvent(kind, m.BarIds[bar], point, lambda, force, utilization, onset) { Branch = branch });
        }
    }
}
