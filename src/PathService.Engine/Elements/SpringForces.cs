using PathService.Engine.Model;

namespace PathService.Engine.Elements;

/// <summary>
/// The linear springs of a model: k·u for a spring to ground, k·(u_j − u_i) between two nodes along one global
/// direction. Linear in u, so the same forces serve the nonlinear path and the linear analysis.
/// </summary>
public static class SpringForces
{
    /// <summary>Adds every spring's force to a full force vector (3 entries per node).</summary>
    public static void AddInternalForce(StructuralModel m, ReadOnlySpan<double> u, Span<double> force)
    {
        for (int s = 0; s < m.GroundSpringStiffness.Length; s++)
            force[m.GroundSpringDof[s]] += m.GroundSpringStiffness[s] * u[m.GroundSpringDof[s]];
        for (int s = 0; s < m.LinkSpringStiffness.Length; s++)
        {
            double t = LinkForce(m, u, s);
            force[m.LinkSpringStartDof[s]] -= t;
            force[m.LinkSpringEndDof[s]] += t;
        }
    }

    /// <summary>Force in ground spring <paramref name="s"/> (positive when it pushes the node back).</summary>
    public static double GroundForce(StructuralModel m, ReadOnlySpan<double> u, int s) => m.GroundSpringStiffness[s] * u[m.GroundSpringDof[s]];

    /// <summary>Force in link spring <paramref name="s"/>, positive when the end node moves further along the direction than the start node.</summary>
    public static double LinkForce(StructuralModel m, ReadOnlySpan<double> u, int s) =>
        m.LinkSpringStiffness[s] * (u[m.LinkSpringEndDof[s]] - u[m.LinkSpringStartDof[s]]);
}
