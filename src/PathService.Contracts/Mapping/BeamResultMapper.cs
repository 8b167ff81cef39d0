using PathService.Engine.Model;
using Proto = PathService.Contracts.V1;

namespace PathService.Contracts.Mapping;

/// <summary>
/// Beam results → messages. The engine gives each element's member-end actions in its current local axes, 12 numbers
/// [F₁, M₁, F₂, M₂]: the force and moment that the start node and the end node exert on the member. The contract reports
/// section forces with one sign convention at both ends (the actions on a cut face whose outward normal is +x): just
/// inside the end they are the end node's actions, (F₂, M₂); just inside the start they are −(F₁, M₁), the actions of
/// the rest of the member on the start piece that balance the start node's. So N is tension-positive at both ends and a
/// constant moment has one sign along the member.
/// </summary>
public static class BeamResultMapper
{
    public static void AddElements(StructuralModel model, IReadOnlyList<double> actions, Google.Protobuf.Collections.RepeatedField<Proto.BeamElementState> target)
    {
        var beams = model.Beams;
        for (int e = 0; e < beams.Count && 12 * e + 11 < actions.Count; e++)
            target.Add(new Proto.BeamElementState
            {
                Element = beams.Ids[e],
                Beam = model.Definition.Beams[beams.Member[e]].Id,
                Start = Section(actions, 12 * e, -1),
                End = Section(actions, 12 * e + 6, +1),
            });
    }

    private static Proto.BeamEndForces Section(IReadOnlyList<double> a, int at, int sign)
    {
        double S(int k) => sign > 0 ? a[at + k] : 0.0 - a[at + k]; // 0 − x: a zero action stays +0, not −0
        return new() { AxialForce = S(0), ShearY = S(1), ShearZ = S(2), Torsion = S(3), MomentY = S(4), MomentZ = S(5) };
    }
}
