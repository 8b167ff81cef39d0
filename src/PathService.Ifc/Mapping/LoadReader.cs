using PathService.Contracts.V1;
using PathService.Ifc.Step;

namespace PathService.Ifc.Mapping;

/// <summary>
/// Nodal loads from an IfcStructuralLoadGroup: its members (IfcRelAssignsToGroup) that are IfcStructuralPointAction,
/// each acting on a point connection (IfcRelConnectsStructuralActivity) with an IfcStructuralLoadSingleForce
/// (ForceX/Y/Z; moments are reported and ignored). GLOBAL_COORDS forces are in the analysis model's axes; LOCAL_COORDS
/// forces are turned by the placement of the action, or of the connection when the action has none, into them.
/// </summary>
internal sealed class LoadReader(EntityAccess a, AnalysisView view, PlacementResolver placements, UnitScales units, FindingSink findings, Placement model)
{
    public static readonly string[] GroupTypes = ["IFCSTRUCTURALLOADGROUP", "IFCSTRUCTURALLOADCASE"];

    public int PointActionCount(StepEntity group) =>
        view.GroupMembers.TryGetValue(group.Number, out var m) ? m.Count(o => o.Type == "IFCSTRUCTURALPOINTACTION") : 0;

    public List<NodalLoad> Read(StepEntity group, IReadOnlyDictionary<int, ConnectionReader.Joint> joints)
    {
        var loads = new List<NodalLoad>();
        if (!view.GroupMembers.TryGetValue(group.Number, out var members)) return loads;
        foreach (var o in members)
        {
            string field = FindingSink.Field(o.Number);
            if (o.Type is "IFCSTRUCTURALLINEARACTION" or "IFCSTRUCTURALCURVEACTION" or "IFCSTRUCTURALPLANARACTION"
                or "IFCSTRUCTURALSURFACEACTION" or "IFCSTRUCTURALPOINTREACTION" or "IFCSTRUCTURALCURVEREACTION")
            {
                findings.Warning("UNSUPPORTED_ACTION", field, "", $"{o.Type} #{o.Number} in load group #{group.Number} is not a point action; it is ignored");
                continue;
            }
            if (o.Type != "IFCSTRUCTURALPOINTACTION") continue;
            if (!view.ActionItem.TryGetValue(o.Number, out var item) || !joints.TryGetValue(item.Number, out var joint))
            {
                findings.Warning("ACTION_NOT_AT_CONNECTION", field, "",
                    $"point action #{o.Number} does not act on a mapped point connection (IfcRelConnectsStructuralActivity); it is ignored");
                continue;
            }
            var load = a.Ref(o, 8, "AppliedLoad");
            if (load.Type is not ("IFCSTRUCTURALLOADSINGLEFORCE" or "IFCSTRUCTURALLOADSINGLEFORCEWARPING"))
            {
                findings.Warning("UNSUPPORTED_LOAD", FindingSink.Field(load.Number), joint.Id,
                    $"{load.Type} #{load.Number} of action #{o.Number} is not a single force; it is ignored");
                continue;
            }
            var f = new Vec3(a.OptionalNumber(load, 2, "ForceX") ?? 0, a.OptionalNumber(load, 3, "ForceY") ?? 0, a.OptionalNumber(load, 4, "ForceZ") ?? 0);
            if ((a.OptionalNumber(load, 5, "MomentX") ?? 0) != 0 || (a.OptionalNumber(load, 6, "MomentY") ?? 0) != 0 || (a.OptionalNumber(load, 7, "MomentZ") ?? 0) != 0)
                findings.Warning("MOMENT_IGNORED", FindingSink.Field(load.Number), joint.Id,
                    $"the moments of #{load.Number} are ignored: pin-jointed bars carry no moment");
            if (a.OptionalEnum(o, 9, "GlobalOrLocal") == "LOCAL_COORDS")
            {
                var frame = a.OptionalRef(o, 6, "ObjectPlacement") is { } p ? placements.ObjectPlacement(p) : joint.Frame;
                f = model.RotateToLocal(frame.Rotate(f));
            }
            f *= units.Force;
            loads.Add(new NodalLoad { Node = joint.Id, Fx = f.X, Fy = f.Y, Fz = f.Z });
        }
        return loads;
    }
}
