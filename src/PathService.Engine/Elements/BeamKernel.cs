namespace PathService.Engine.Elements;

/// <summary>
/// The call from <see cref="BeamElementKind"/> into the corotational beam kernel (written on its own, in
/// CorotationalBeam*.cs): inputs and outputs in the order the element kind gathers them.
/// </summary>
internal static class BeamKernel
{
    /// <param name="x0">Initial end coordinates (start x, y, z, end x, y, z).</param>
    /// <param name="releases1">Release flags at the start (<see cref="Model.BeamElements.ReleaseTorsion"/> etc.).</param>
    /// <param name="triad0">Initial triad, rows e_x, e_y, e_z.</param>
    /// <param name="d">End translations (start, end).</param>
    /// <param name="r1">Current rotation matrix of the start node (row-major), R = exp(ψ̂).</param>
    /// <param name="force">12 internal forces and moments in global axes, [u1, θ1, u2, θ2].</param>
    /// <param name="tangent">12×12 symmetric tangent (row-major) with respect to translations and spatial spins; empty: not wanted.</param>
    /// <param name="local">12 local end forces: N, Vy, Vz, T, My, Mz at the start, then at the end.</param>
    public static void Evaluate(ReadOnlySpan<double> x0, in BeamSection section, int releases1, int releases2, ReadOnlySpan<double> triad0,
        ReadOnlySpan<double> d, ReadOnlySpan<double> r1, ReadOnlySpan<double> r2, Span<double> force, Span<double> tangent, Span<double> local) =>
        throw new NotSupportedException("the corotational beam kernel is not merged yet");
}
