using PathService.Contracts.V1;
using PathService.Ifc.Step;

namespace PathService.Ifc.Mapping;

/// <summary>
/// Bars from IfcStructuralCurveMember. The member's connections are the IfcRelConnectsStructuralMember instances that
/// relate it; they are ordered along the member's axis (from EdgeStart of its IfcEdge topology representation when it
/// has one, else from the connection of the first relationship) and consecutive pairs become bars, so a member that
/// runs through intermediate connections is split there. Curved edges, eccentric or conditioned member ends and rigid
/// joints are mapped as straight pin-ended bars between the connections and reported.
/// </summary>
internal sealed class MemberReader(EntityAccess a, AnalysisView view, PlacementResolver placements, ConnectionReader connections,
    SectionReader sections, FindingSink findings)
{
    public void Read(StepEntity member, string id, IReadOnlyDictionary<int, ConnectionReader.Joint> joints, StructureModel model)
    {
        string field = FindingSink.Field(member.Number);
        var rels = view.MemberConnections.TryGetValue(member.Number, out var list) ? list : [];
        var ends = new List<ConnectionReader.Joint>();
        foreach (var rel in rels)
        {
            var conn = a.Ref(rel, 6, "RelatedStructuralConnection");
            ReportEndConditions(rel, id);
            if (conn.Type != "IFCSTRUCTURALPOINTCONNECTION")
            {
                findings.Warning("UNSUPPORTED_CONNECTION", FindingSink.Field(rel.Number), id,
                    $"member #{member.Number} is connected to {conn.Type} #{conn.Number}; only point connections are read");
                continue;
            }
            if (!joints.TryGetValue(conn.Number, out var joint))
            {
                findings.Error("CONNECTION_NOT_MAPPED", FindingSink.Field(rel.Number), id,
                    $"member #{member.Number} is connected to #{conn.Number}, which is not a mapped connection of the analysis model");
                continue;
            }
            if (!ends.Contains(joint)) ends.Add(joint);
        }
        if (ends.Count < 2)
        {
            findings.Error("MEMBER_NOT_MAPPED", field, id,
                $"member #{member.Number} has {ends.Count} mapped point connection(s); a bar needs two");
            return;
        }
        if (member.Type == "IFCSTRUCTURALCURVEMEMBERVARYING")
            findings.Warning("VARYING_MEMBER", field, id, $"member #{member.Number} varies along its length; one section is read for all of it");
        var behaviour = Behaviour(member, id);

        var (start, end, curved) = Axis(member, ends);
        if (curved)
            findings.Warning("CURVED_MEMBER", field, id, $"member #{member.Number} is curved; it is mapped as straight chords between its connections");
        var dir = end - start;
        double length = dir.Length;
        var ordered = ends.OrderBy(j => (j.Position - start).Dot(dir)).ToList();
        foreach (var j in ordered)
        {
            var off = (j.Position - start) - dir * ((j.Position - start).Dot(dir) / (length * length));
            if (off.Length > 1e-6 * length)
                findings.Warning("CONNECTION_OFF_AXIS", FindingSink.Field(j.Entity.Number), id,
                    $"connection #{j.Entity.Number} lies {off.Length:G4} off the axis of member #{member.Number}");
        }
        var (e, area) = sections.Read(member, id);
        if (ordered.Count > 2)
            findings.Warning("MEMBER_SPLIT", field, id,
                $"member #{member.Number} runs through {ordered.Count - 2} intermediate connection(s); it is split into bars {id}.1 to {id}.{ordered.Count - 1}");
        for (int i = 0; i + 1 < ordered.Count; i++)
        {
            string barId = ordered.Count > 2 ? $"{id}.{i + 1}" : id;
            if ((ordered[i + 1].Position - ordered[i].Position).Length < 1e-9 * Math.Max(length, 1e-300))
            {
                findings.Error("COINCIDENT_CONNECTIONS", field, barId,
                    $"connections #{ordered[i].Entity.Number} and #{ordered[i + 1].Entity.Number} of member #{member.Number} coincide; no bar between them");
                continue;
            }
            model.Bars.Add(new Bar
            {
                Id = barId, StartNode = ordered[i].Id, EndNode = ordered[i + 1].Id, ElasticModulus = e, Area = area, Behavior = behaviour,
            });
        }
    }

    private BarBehavior Behaviour(StepEntity member, string id)
    {
        string? type = a.OptionalEnum(member, 8, "PredefinedType");
        switch (type)
        {
            case "TENSION_MEMBER":
            case "CABLE":
                return BarBehavior.TensionOnly;
            case "COMPRESSION_MEMBER":
                return BarBehavior.CompressionOnly;
            case "RIGID_JOINED_MEMBER":
                findings.Warning("RIGID_JOINTS_IGNORED", FindingSink.Field(member.Number), id,
                    $"member #{member.Number} is rigidly joined; it is mapped as a pin-ended bar (axial force only)");
                return BarBehavior.Unspecified;
            default:
                return BarBehavior.Unspecified;
        }
    }

    /// <summary>Start and end of the member's axis, and whether its edge is curved.</summary>
    private (Vec3 Start, Vec3 End, bool Curved) Axis(StepEntity member, List<ConnectionReader.Joint> ends)
    {
        if (a.OptionalRef(member, 7, "Representation") is { } shape)
        {
            var frame = a.OptionalRef(member, 6, "ObjectPlacement") is { } p ? placements.ObjectPlacement(p) : Placement.World;
            foreach (var rep in a.RefList(shape, 3, "Representations"))
            {
                if (rep.Type != "IFCTOPOLOGYREPRESENTATION") continue;
                foreach (var item in a.RefList(rep, 4, "Items"))
                {
                    var edge = item.Type == "IFCORIENTEDEDGE" ? a.Ref(item, 3, "EdgeElement") : item;
                    if (edge.Type is not ("IFCEDGE" or "IFCEDGECURVE")) continue;
                    var s = Vertex(a.Ref(edge, 1, "EdgeStart", "IFCVERTEXPOINT"));
                    var e = Vertex(a.Ref(edge, 2, "EdgeEnd", "IFCVERTEXPOINT"));
                    bool curved = edge.Type == "IFCEDGECURVE" && IsCurved(a.Ref(edge, 3, "EdgeGeometry"));
                    if (item.Type == "IFCORIENTEDEDGE" && a.OptionalEnum(item, 4, "Orientation") == "F") (s, e) = (e, s);
                    var gs = connections.Model.ToLocal(frame.Apply(s));
                    var ge = connections.Model.ToLocal(frame.Apply(e));
                    if ((ge - gs).Length > 0) return (gs, ge, curved);
                }
            }
        }
        // No edge: from the first relationship's connection to the connection farthest from it.
        var first = ends[0].Position;
        var far = ends.OrderByDescending(j => (j.Position - first).Length).First().Position;
        return (first, far, false);
    }

    private Vec3 Vertex(StepEntity v) => placements.Point(a.Ref(v, 1, "VertexGeometry", "IFCCARTESIANPOINT"));

    private bool IsCurved(StepEntity curve) => curve.Type switch
    {
        "IFCLINE" => false,
        "IFCPOLYLINE" => a.RefList(curve, 1, "Points").Count > 2,
        _ => true,
    };

    private void ReportEndConditions(StepEntity rel, string id)
    {
        string field = FindingSink.Field(rel.Number);
        if (rel.Type == "IFCRELCONNECTSWITHECCENTRICITY")
            findings.Warning("ECCENTRICITY_IGNORED", field, id, $"the eccentric connection #{rel.Number} is mapped as concentric");
        if (a.IsSet(rel, 7))
            findings.Warning("MEMBER_END_CONDITION_IGNORED", field, id, $"the member-end condition (AppliedCondition) of #{rel.Number} is ignored: bar ends are pinned");
        if (a.IsSet(rel, 8))
            findings.Warning("CONNECTION_CONDITION_IGNORED", field, id, $"AdditionalConditions of #{rel.Number} are ignored");
        if (a.IsSet(rel, 9))
            findings.Warning("SUPPORTED_LENGTH_IGNORED", field, id, $"SupportedLength of #{rel.Number} is ignored");
        if (a.IsSet(rel, 10))
            findings.Warning("CONDITION_AXES_IGNORED", field, id, $"ConditionCoordinateSystem of #{rel.Number} is ignored");
    }
}
