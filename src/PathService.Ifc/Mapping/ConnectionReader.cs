using PathService.Contracts.V1;
using PathService.Ifc.Step;

namespace PathService.Ifc.Mapping;

/// <summary>
/// Nodes, supports and ground springs from IfcStructuralPointConnection. The position is the connection's
/// IfcLocalPlacement applied to the IfcVertexPoint of its topology representation when it has one, else the
/// placement's origin. IfcBoundaryNodeCondition (ISO 16739-1:2018, IfcStructuralLoadResource): each
/// TranslationalStiffnessX/Y/Z is an IfcTranslationalStiffnessSelect, IfcBoolean TRUE = fixed (a Support), FALSE or
/// unset = free, an IfcLinearStiffnessMeasure k &gt; 0 = an elastic bearing (a GroundSpring), 0 = free. Rotational
/// stiffnesses mean nothing to pin-jointed bars and are reported when set.
/// </summary>
internal sealed class ConnectionReader(EntityAccess a, PlacementResolver placements, UnitScales units, FindingSink findings, Placement? shared)
{
    public sealed record Joint(StepEntity Entity, string Id, Vec3 Position, Placement Frame);

    /// <summary>The analysis model's coordinate system: directions of conditions and global loads refer to it.</summary>
    public Placement Model { get; } = shared ?? Placement.World;

    public Joint? Read(StepEntity c, string id)
    {
        var frame = a.OptionalRef(c, 6, "ObjectPlacement") is { } p ? placements.ObjectPlacement(p) : shared ?? Placement.World;
        var vertex = VertexOf(c);
        if (vertex is null && !a.IsSet(c, 6) && shared is null)
        {
            findings.Error("MISSING_POSITION", FindingSink.Field(c.Number), id,
                $"connection #{c.Number} has neither an ObjectPlacement nor a vertex representation, so its position is unknown");
            return null;
        }
        // Positions are given in the analysis model's coordinate system (SharedPlacement, else the file's world).
        var world = vertex is { } v ? frame.Apply(v) : frame.Origin;
        return new Joint(c, id, Model.ToLocal(world), frame);
    }

    /// <summary>The local coordinates of the first IfcVertexPoint in the product's topology representations.</summary>
    public Vec3? VertexOf(StepEntity product)
    {
        if (a.OptionalRef(product, 7, "Representation") is not { } shape) return null;
        foreach (var rep in a.RefList(shape, 3, "Representations"))
        {
            if (rep.Type != "IFCTOPOLOGYREPRESENTATION") continue;
            foreach (var item in a.RefList(rep, 4, "Items"))
                if (item.Type == "IFCVERTEXPOINT")
                    return placements.Point(a.Ref(item, 1, "VertexGeometry", "IFCCARTESIANPOINT"));
        }
        return null;
    }

    public void Conditions(Joint j, StructureModel model)
    {
        var c = j.Entity;
        if (a.OptionalRef(c, 8, "AppliedCondition") is not { } cond) return;
        string field = FindingSink.Field(cond.Number);
        if (cond.Type is not ("IFCBOUNDARYNODECONDITION" or "IFCBOUNDARYNODECONDITIONWARPING"))
        {
            findings.Error("UNSUPPORTED_CONDITION", field, j.Id, $"{cond.Type} #{cond.Number} on connection #{c.Number} is not a node condition; it is ignored");
            return;
        }
        var axes = a.File.Schema != "IFC2X3" ? a.OptionalRef(c, 9, "ConditionCoordinateSystem", "IFCAXIS2PLACEMENT3D") : null;
        if (axes is null && !j.Frame.SameAxes(Model))
            findings.Warning("CONDITION_AXES_ASSUMED", FindingSink.Field(c.Number), j.Id,
                $"connection #{c.Number} is placed in axes turned from the analysis model's; its boundary condition is read in the model's axes");
        // ConditionCoordinateSystem is given relative to the connection's ObjectPlacement (ISO 16739-1:2018,
        // IfcStructuralPointConnection); only axes parallel to the model's can be expressed as supports and springs.
        if (axes is not null && !placements.Axis2(axes).Then(j.Frame).SameAxes(Model))
        {
            findings.Error("ROTATED_CONDITION_AXES", FindingSink.Field(c.Number), j.Id,
                $"the boundary condition of connection #{c.Number} acts in rotated axes (ConditionCoordinateSystem #{axes.Number}); only global directions are supported, so it is not applied");
            return;
        }
        var dirs = new[] { Direction.X, Direction.Y, Direction.Z };
        string[] names = a.File.Schema == "IFC2X3"
            ? ["LinearStiffnessX", "LinearStiffnessY", "LinearStiffnessZ"]
            : ["TranslationalStiffnessX", "TranslationalStiffnessY", "TranslationalStiffnessZ"];
        for (int i = 0; i < 3; i++)
        {
            var v = a.Raw(cond, 2 + i, names[i]);
            switch (v)
            {
                case StepNull:
                    break;
                case StepTyped { TypeName: "IFCBOOLEAN", Inner: StepEnum b } when b.Value is "T" or "F":
                case StepEnum b2 when b2.Value is "T" or "F":
                    if (v is StepTyped { Inner: StepEnum { Value: "T" } } or StepEnum { Value: "T" })
                        model.Supports.Add(new Support { Node = j.Id, Direction = dirs[i] });
                    break;
                default:
                    double k = EntityAccess.NumberOf(v)
                        ?? throw EntityAccess.Error(cond, 2 + i, names[i], $"must be IFCBOOLEAN(.T./.F.) or a linear stiffness, found {v.Kind}");
                    if (k < 0)
                        findings.Error("NEGATIVE_STIFFNESS", field, j.Id, $"{names[i]} of #{cond.Number} is negative ({k}); it is not applied");
                    else if (k > 0)
                    {
                        if (a.File.Schema == "IFC2X3")
                            findings.Warning("IFC2X3_STIFFNESS_AS_SPRING", field, j.Id,
                                $"IFC2X3 states {names[i]} of #{cond.Number} as a number only ({k}); it is read as a spring, never as a fixed support");
                        model.GroundSprings.Add(new GroundSpring
                        {
                            Id = $"{j.Id}-k{"xyz"[i]}", Node = j.Id, Direction = dirs[i], Stiffness = k * units.Stiffness,
                        });
                    }
                    break;
            }
        }
        for (int i = 0; i < 3; i++)
        {
            var v = a.Raw(cond, 5 + i, "RotationalStiffness");
            bool free = v is StepNull || v is StepTyped { Inner: StepEnum { Value: "F" } } || EntityAccess.NumberOf(v) == 0;
            if (!free)
            {
                findings.Warning("ROTATIONAL_RESTRAINT_IGNORED", field, j.Id,
                    $"the rotational restraints of #{cond.Number} are ignored: pin-jointed bars carry no moment");
                break;
            }
        }
    }
}
