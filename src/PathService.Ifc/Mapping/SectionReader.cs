using PathService.Ifc.Step;

namespace PathService.Ifc.Mapping;

/// <summary>
/// Young's modulus and cross-section area of a curve member from its material association. IFC4: IfcMaterial with
/// IfcMaterialProperties holding the property YoungModulus (Pset_MaterialMechanical), and IfcMaterialProfileSetUsage →
/// IfcMaterialProfileSet → IfcMaterialProfile → IfcProfileDef, whose area is either stated (IfcProfileProperties with
/// the property CrossSectionArea, Pset_ProfileMechanical) or computed from the parametric dimensions. IFC2X3:
/// IfcMechanicalMaterialProperties.YoungModulus and IfcRelAssociatesProfileProperties → IfcGeneralProfileProperties
/// (CrossSectionArea or ProfileDefinition).
/// </summary>
internal sealed class SectionReader(EntityAccess a, AnalysisView view, UnitScales units, FindingSink findings)
{
    private readonly bool _ifc2x3 = a.File.Schema == "IFC2X3";
    private readonly Dictionary<int, double?> _moduli = new();

    public (double E, double A) Read(StepEntity member, string barId)
    {
        string field = FindingSink.Field(member.Number);
        StepEntity? material = null, profile = null;
        if (view.MaterialOf.TryGetValue(member.Number, out var relating))
            (material, profile) = Resolve(relating, field, barId);
        double e = 0, area = 0;
        if (material is null)
            findings.Error("MISSING_MATERIAL", field, barId, $"member #{member.Number} has no material (IfcRelAssociatesMaterial), so E is unknown");
        else if (Modulus(material) is { } m) e = m * units.Modulus;
        else
            findings.Error("MISSING_MODULUS", FindingSink.Field(material.Number), barId,
                $"material #{material.Number} of member #{member.Number} states no YoungModulus");

        double? stated = null;
        if (_ifc2x3 && view.ProfilePropertiesOf.TryGetValue(member.Number, out var props2x3))
        {
            if (props2x3.Type is "IFCGENERALPROFILEPROPERTIES" or "IFCSTRUCTURALPROFILEPROPERTIES" or "IFCSTRUCTURALSTEELPROFILEPROPERTIES"
                && a.OptionalNumber(props2x3, 7, "CrossSectionArea") is { } s2) stated = s2;
            profile ??= a.OptionalRef(props2x3, 2, "ProfileDefinition");
        }
        if (stated is null && profile is not null) stated = StatedArea(profile);
        if (stated is { } st)
        {
            if (!(st > 0)) findings.Error("NON_POSITIVE_AREA", field, barId, $"the stated cross-section area of member #{member.Number} is {st}");
            area = st * units.Area;
        }
        else if (profile is null)
            findings.Error("MISSING_PROFILE", field, barId, $"member #{member.Number} has no profile and no stated area, so A is unknown");
        else if (ProfileAreas.Area(a, profile, out bool radii) is { } computed)
        {
            area = computed * units.Length * units.Length;
            if (radii)
                findings.Warning("FILLET_RADII_IGNORED", FindingSink.Field(profile.Number), barId,
                    $"the fillet/edge radii of {profile.Type} #{profile.Number} are ignored; A is that of the sharp-cornered section");
        }
        else
            findings.Error("UNSUPPORTED_PROFILE", FindingSink.Field(profile.Number), barId,
                $"{profile.Type} #{profile.Number} is not a supported parametric profile and states no CrossSectionArea");
        return (e, area);
    }

    private (StepEntity? Material, StepEntity? Profile) Resolve(StepEntity relating, string field, string barId)
    {
        switch (relating.Type)
        {
            case "IFCMATERIAL":
                return (relating, null);
            case "IFCMATERIALPROFILESETUSAGE":
                return Resolve(a.Ref(relating, 1, "ForProfileSet", "IFCMATERIALPROFILESET"), field, barId);
            case "IFCMATERIALPROFILESET":
            {
                var profiles = a.RefList(relating, 3, "MaterialProfiles", "IFCMATERIALPROFILE");
                if (profiles.Count == 0) throw EntityAccess.Error(relating, 3, "MaterialProfiles", "is empty");
                if (profiles.Count > 1)
                    findings.Error("COMPOSITE_PROFILE", FindingSink.Field(relating.Number), barId,
                        $"profile set #{relating.Number} holds {profiles.Count} profiles; only the first is read");
                return Resolve(profiles[0], field, barId);
            }
            case "IFCMATERIALPROFILE":
                return (a.OptionalRef(relating, 3, "Material", "IFCMATERIAL"), a.Ref(relating, 4, "Profile"));
            case "IFCMATERIALLIST":
            {
                var list = a.RefList(relating, 1, "Materials", "IFCMATERIAL");
                if (list.Count != 1)
                    findings.Warning("MATERIAL_LIST", FindingSink.Field(relating.Number), barId,
                        $"material list #{relating.Number} holds {list.Count} materials; the first is read");
                return (list.FirstOrDefault(), null);
            }
            default:
                findings.Error("UNSUPPORTED_MATERIAL", FindingSink.Field(relating.Number), barId,
                    $"{relating.Type} #{relating.Number} is not a supported material association");
                return (null, null);
        }
    }

    private double? Modulus(StepEntity material)
    {
        if (_moduli.TryGetValue(material.Number, out var cached)) return cached;
        double? result = null;
        if (_ifc2x3)
        {
            foreach (var type in new[] { "IFCMECHANICALMATERIALPROPERTIES", "IFCMECHANICALSTEELMATERIALPROPERTIES", "IFCMECHANICALCONCRETEMATERIALPROPERTIES" })
                foreach (var p in a.File.OfType(type))
                    if (a.Ref(p, 1, "Material").Number == material.Number && a.OptionalNumber(p, 3, "YoungModulus") is { } e)
                        result ??= e;
        }
        else
        {
            foreach (var p in a.File.OfType("IFCMATERIALPROPERTIES"))
                if (a.Ref(p, 4, "Material").Number == material.Number && Property(p, 3, "YoungModulus") is { } e)
                    result ??= e;
        }
        _moduli[material.Number] = result;
        return result;
    }

    private Dictionary<int, double>? _statedAreas;

    /// <summary>Stated areas by profile instance, indexed on first use (IfcProfileProperties.ProfileDefinition).</summary>
    private double? StatedArea(StepEntity profile)
    {
        if (_ifc2x3) return null;
        if (_statedAreas is null)
        {
            _statedAreas = new Dictionary<int, double>();
            foreach (var p in a.File.OfType("IFCPROFILEPROPERTIES"))
                if (Property(p, 3, "CrossSectionArea") is { } v)
                    _statedAreas.TryAdd(a.Ref(p, 4, "ProfileDefinition").Number, v);
        }
        return _statedAreas.TryGetValue(profile.Number, out var area) ? area : null;
    }

    /// <summary>The nominal value of a named IfcPropertySingleValue in an extended-properties set.</summary>
    private double? Property(StepEntity set, int attribute, string name)
    {
        foreach (var prop in a.RefList(set, attribute, "Properties"))
        {
            if (prop.Type != "IFCPROPERTYSINGLEVALUE" || a.OptionalString(prop, 1, "Name") != name) continue;
            var v = a.Raw(prop, 3, "NominalValue");
            return EntityAccess.NumberOf(v) ?? throw EntityAccess.Error(prop, 3, "NominalValue", $"of {name} must be a number, found {v.Kind}");
        }
        return null;
    }
}
