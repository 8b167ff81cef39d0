using PathService.Engine.Continuation;
using PathService.Engine.Model;
using PathService.Engine.Sparse;

namespace PathService.Engine.Stability;

/// <summary>
/// Turns a singular starting tangent into a <see cref="MechanismException"/> that names a node and direction:
/// the DOF with the largest component of the near-null vector (the mechanism's motion), or, when the factor is
/// unusable, the DOF whose pivot vanished.
/// </summary>
internal static class MechanismDetector
{
    public static void ThrowIfSingular(EquilibriumSystem sys, LdlStatus status)
    {
        if (status == LdlStatus.Success) return;
        int eq = sys.Factor.TinyPivotIndex;
        if (status == LdlStatus.TinyPivot)
        {
            var (_, mode) = NearNullMode.Compute(sys, null, maxIterations: 8);
            int best = 0;
            for (int i = 1; i < mode.Length; i++)
                if (Math.Abs(mode[i]) > Math.Abs(mode[best]) + 1e-12) best = i;
            if (mode.Length > 0 && double.IsFinite(mode[best])) eq = best;
        }
        if (eq < 0) eq = 0;
        var (node, axis) = sys.Model.DescribeDof(sys.Model.Dofs.FullOf[eq]);
        string motion = (int)axis < 3 ? $"move in {axis.ToString().ToLowerInvariant()}" : $"rotate about {axis.ToString()[^1..].ToLowerInvariant()}";
        throw new MechanismException(node, axis,
            $"the structure is a mechanism: node '{node}' can {motion} without resistance " +
            $"(singular tangent stiffness at the start). Add a {((int)axis < 3 ? "bar, beam, spring or support" : "beam end holding that rotation, a rotational spring or a rotational support")} that restrains it.");
    }
}
