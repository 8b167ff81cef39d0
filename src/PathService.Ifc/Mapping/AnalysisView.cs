using PathService.Ifc.Step;

namespace PathService.Ifc.Mapping;

/// <summary>
/// Indexes of the relationships the structural analysis view is navigated by (ISO 16739-1:2018: IfcRelAssignsToGroup
/// for the members of an analysis model or load group, IfcRelConnectsStructuralMember between members and
/// connections, IfcRelConnectsStructuralActivity between actions and items, IfcRelAssociatesMaterial), built once so
/// that each lookup is a dictionary access.
/// </summary>
internal sealed class AnalysisView
{
    public AnalysisView(EntityAccess a)
    {
        foreach (var rel in a.File.OfType("IFCRELASSIGNSTOGROUP").Concat(a.File.OfType("IFCRELASSIGNSTOGROUPBYFACTOR")))
        {
            var group = a.Ref(rel, 7, "RelatingGroup");
            foreach (var o in a.RefList(rel, 5, "RelatedObjects")) Add(GroupMembers, group.Number, o);
        }
        foreach (var rel in a.File.OfType("IFCRELCONNECTSSTRUCTURALMEMBER").Concat(a.File.OfType("IFCRELCONNECTSWITHECCENTRICITY")))
        {
            var member = a.Ref(rel, 5, "RelatingStructuralMember");
            Add(MemberConnections, member.Number, rel);
        }
        foreach (var rel in a.File.OfType("IFCRELCONNECTSSTRUCTURALACTIVITY"))
        {
            var item = a.Ref(rel, 5, "RelatingElement");
            var action = a.Ref(rel, 6, "RelatedStructuralActivity");
            ActionItem.TryAdd(action.Number, item);
        }
        foreach (var rel in a.File.OfType("IFCRELASSOCIATESMATERIAL"))
        {
            var material = a.Ref(rel, 6, "RelatingMaterial");
            foreach (var o in a.RefList(rel, 5, "RelatedObjects")) MaterialOf.TryAdd(o.Number, material);
        }
        foreach (var rel in a.File.OfType("IFCRELASSOCIATESPROFILEPROPERTIES"))
        {
            var props = a.Ref(rel, 6, "RelatingProfileProperties");
            foreach (var o in a.RefList(rel, 5, "RelatedObjects")) ProfilePropertiesOf.TryAdd(o.Number, props);
        }
    }

    public Dictionary<int, List<StepEntity>> GroupMembers { get; } = new();
    /// <summary>IfcRelConnectsStructuralMember instances by the member they relate, in entity-number order.</summary>
    public Dictionary<int, List<StepEntity>> MemberConnections { get; } = new();
    public Dictionary<int, StepEntity> ActionItem { get; } = new();
    public Dictionary<int, StepEntity> MaterialOf { get; } = new();
    /// <summary>IFC2X3 only: IfcRelAssociatesProfileProperties.</summary>
    public Dictionary<int, StepEntity> ProfilePropertiesOf { get; } = new();

    private static void Add(Dictionary<int, List<StepEntity>> map, int key, StepEntity value)
    {
        if (!map.TryGetValue(key, out var list)) map[key] = list = [];
        list.Add(value);
    }
}
