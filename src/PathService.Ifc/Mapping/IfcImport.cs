using PathService.Contracts.V1;
using PathService.Ifc.Step;

namespace PathService.Ifc.Mapping;

/// <summary>
/// Reads the structural analysis view of an IFC file (ISO 16739-1:2018, IfcStructuralAnalysisDomain; IFC4, and IFC2X3
/// where it differs little) into the contract's StructureModel and LoadCase. The file is parsed as an ISO 10303-21
/// exchange structure; a file that cannot be read throws <see cref="StepFormatException"/> naming the instance,
/// the attribute and why; an option the file cannot satisfy throws <see cref="IfcOptionException"/> naming the option; everything the mapper could not carry
/// over is a finding.
/// </summary>
public static class IfcImport
{
    public static readonly IReadOnlyCollection<string> SupportedSchemas = ["IFC4", "IFC2X3"];

    public static IfcImportResult Read(Stream stream, IfcImportOptions? options = null)
    {
        options ??= new IfcImportOptions();
        if (!UnitScales.ForceLabels.ContainsKey(options.ForceUnit))
            throw new IfcOptionException(IfcOption.ForceUnit, $"force unit '{options.ForceUnit}' is not one of {string.Join(", ", UnitScales.ForceLabels.Keys)}");
        if (!UnitScales.LengthLabels.ContainsKey(options.LengthUnit))
            throw new IfcOptionException(IfcOption.LengthUnit, $"length unit '{options.LengthUnit}' is not one of {string.Join(", ", UnitScales.LengthLabels.Keys)}");
        if (options.MaxBytes <= 0) throw new ArgumentException("MaxBytes must be positive", nameof(options));

        var file = StepReader.Read(stream, options.MaxBytes, SupportedSchemas);
        return Map(file, options);
    }

    internal static IfcImportResult Map(StepFile file, IfcImportOptions options)
    {
        var a = new EntityAccess(file);
        var findings = new FindingSink();
        var units = new UnitScales(a, options.ForceUnit, options.LengthUnit, findings);
        var view = new AnalysisView(a);
        var placements = new PlacementResolver(a, units.Length);

        var analysisModel = ChooseAnalysisModel(a, options.AnalysisModel, findings);
        Placement? shared = null;
        if (analysisModel is not null && file.Schema == "IFC4" && a.OptionalRef(analysisModel, 10, "SharedPlacement") is { } sp)
            shared = placements.ObjectPlacement(sp);
        var items = ItemsOf(a, view, analysisModel, findings);

        var model = new StructureModel
        {
            Name = analysisModel is not null ? a.OptionalString(analysisModel, 3, "Name") ?? "ifc model" : "ifc model",
            Units = new UnitLabels { Force = options.ForceUnit, Length = options.LengthUnit },
        };
        var connections = new ConnectionReader(a, placements, units, findings, shared);
        var joints = new Dictionary<int, ConnectionReader.Joint>();
        var connectionEntities = items.Where(e => e.Type == "IFCSTRUCTURALPOINTCONNECTION").ToList();
        var memberEntities = items.Where(e => e.Type is "IFCSTRUCTURALCURVEMEMBER" or "IFCSTRUCTURALCURVEMEMBERVARYING").ToList();
        var connectionNames = NameCounts(a, connectionEntities);
        var memberNames = NameCounts(a, memberEntities);
        foreach (var c in connectionEntities)
        {
            var joint = connections.Read(c, IdOf(a, c, "C", connectionNames, findings));
            if (joint is not null) joints[c.Number] = joint;
        }
        foreach (var other in items.Where(e => e.Type is "IFCSTRUCTURALCURVECONNECTION" or "IFCSTRUCTURALSURFACECONNECTION" or "IFCSTRUCTURALSURFACEMEMBER" or "IFCSTRUCTURALSURFACEMEMBERVARYING"))
            findings.Warning("UNSUPPORTED_ITEM", FindingSink.Field(other.Number), "", $"{other.Type} #{other.Number} is not read: only point connections and curve members map to a pin-jointed truss");

        // Nodes: the connections that at least one member reaches, in entity-number order.
        var reached = new HashSet<int>();
        foreach (var m in memberEntities)
            if (view.MemberConnections.TryGetValue(m.Number, out var rels))
                foreach (var rel in rels) reached.Add(a.Ref(rel, 6, "RelatedStructuralConnection").Number);
        foreach (var j in joints.Values.OrderBy(j => j.Entity.Number))
        {
            if (!reached.Contains(j.Entity.Number))
            {
                findings.Warning("UNCONNECTED_CONNECTION", FindingSink.Field(j.Entity.Number), j.Id, $"connection #{j.Entity.Number} joins no member; it is left out");
                continue;
            }
            model.Nodes.Add(new Node { Id = j.Id, X = j.Position.X, Y = j.Position.Y, Z = j.Position.Z });
            connections.Conditions(j, model);
        }
        var nodeJoints = joints.Where(kv => reached.Contains(kv.Key)).ToDictionary(kv => kv.Key, kv => kv.Value);

        var sections = new SectionReader(a, view, units, findings);
        var members = new MemberReader(a, view, placements, connections, sections, findings);
        foreach (var m in memberEntities) members.Read(m, IdOf(a, m, "M", memberNames, findings), nodeJoints, model);

        var loads = new LoadReader(a, view, placements, units, findings, connections.Model);
        var groups = LoadGroupsOf(a, view, analysisModel);
        var loadCase = new LoadCase();
        var reference = ChooseGroup(a, groups, options.ReferenceLoadGroup, loads, "reference", findings);
        if (reference is not null) loadCase.Reference.AddRange(loads.Read(reference, nodeJoints));
        if (options.ConstantLoadGroup is { } constantName)
        {
            var constant = ChooseGroup(a, groups, constantName, loads, "constant", findings)!;
            if (reference is not null && constant.Number == reference.Number)
                throw new IfcOptionException(IfcOption.ConstantLoadGroup, $"the constant and the reference load group are the same (#{constant.Number})");
            loadCase.Constant.AddRange(loads.Read(constant, nodeJoints));
        }
        return new IfcImportResult(model, loadCase, findings.Items, units.Note, file.Schema);
    }

    private static string Label(EntityAccess a, StepEntity e) =>
        $"#{e.Number} '{a.OptionalString(e, 3, "Name") ?? ""}' ({a.OptionalString(e, 1, "GlobalId") ?? ""})";

    private static bool Matches(EntityAccess a, StepEntity e, string key) =>
        a.OptionalString(e, 3, "Name") == key || a.OptionalString(e, 1, "GlobalId") == key;

    private static StepEntity? ChooseAnalysisModel(EntityAccess a, string? key, FindingSink findings)
    {
        var models = a.File.OfType("IFCSTRUCTURALANALYSISMODEL").ToList();
        if (key is not null)
        {
            var match = models.Where(m => Matches(a, m, key)).ToList();
            if (match.Count == 1) return match[0];
            throw new IfcOptionException(IfcOption.AnalysisModel, match.Count == 0
                ? $"no IfcStructuralAnalysisModel is named or identified '{key}'; the file has: {string.Join(", ", models.Select(m => Label(a, m)))}"
                : $"{match.Count} analysis models match '{key}'; give the GlobalId");
        }
        if (models.Count == 1) return models[0];
        if (models.Count == 0)
        {
            findings.Warning("NO_ANALYSIS_MODEL", "", "", "the file has no IfcStructuralAnalysisModel; every structural item in it is read");
            return null;
        }
        throw new IfcOptionException(IfcOption.AnalysisModel, $"the file holds {models.Count} analysis models; choose one by name or GlobalId: {string.Join(", ", models.Select(m => Label(a, m)))}");
    }

    private static List<StepEntity> ItemsOf(EntityAccess a, AnalysisView view, StepEntity? model, FindingSink findings)
    {
        string[] types = ["IFCSTRUCTURALPOINTCONNECTION", "IFCSTRUCTURALCURVEMEMBER", "IFCSTRUCTURALCURVEMEMBERVARYING",
            "IFCSTRUCTURALCURVECONNECTION", "IFCSTRUCTURALSURFACECONNECTION", "IFCSTRUCTURALSURFACEMEMBER", "IFCSTRUCTURALSURFACEMEMBERVARYING"];
        var all = types.SelectMany(a.File.OfType).OrderBy(e => e.Number).ToList();
        if (model is null) return all;
        if (!view.GroupMembers.TryGetValue(model.Number, out var members))
        {
            findings.Warning("MODEL_MEMBERSHIP_ASSUMED", FindingSink.Field(model.Number), "",
                $"no IfcRelAssignsToGroup assigns items to analysis model #{model.Number}; every structural item in the file is read");
            return all;
        }
        var set = members.Select(m => m.Number).ToHashSet();
        return all.Where(e => set.Contains(e.Number)).ToList();
    }

    private static List<StepEntity> LoadGroupsOf(EntityAccess a, AnalysisView view, StepEntity? model)
    {
        var all = LoadReader.GroupTypes.SelectMany(a.File.OfType).OrderBy(e => e.Number).ToList();
        if (model is null) return all;
        var loadedBy = a.RefList(model, 8, "LoadedBy").Select(g => g.Number).ToHashSet();
        if (view.GroupMembers.TryGetValue(model.Number, out var members))
            loadedBy.UnionWith(members.Where(m => LoadReader.GroupTypes.Contains(m.Type)).Select(m => m.Number));
        return loadedBy.Count == 0 ? all : all.Where(g => loadedBy.Contains(g.Number)).ToList();
    }

    private static StepEntity? ChooseGroup(EntityAccess a, List<StepEntity> groups, string? key, LoadReader loads, string role, FindingSink findings)
    {
        string available = string.Join(", ", groups.Select(g => Label(a, g)));
        if (key is not null)
        {
            var match = groups.Where(g => Matches(a, g, key)).ToList();
            if (match.Count == 1) return match[0];
            throw new IfcOptionException(role == "constant" ? IfcOption.ConstantLoadGroup : IfcOption.ReferenceLoadGroup, match.Count == 0
                ? $"no load group of the analysis model is named or identified '{key}' (asked as the {role} load); available: {available}"
                : $"{match.Count} load groups match '{key}'; give the GlobalId");
        }
        var loaded = groups.Where(g => loads.PointActionCount(g) > 0).ToList();
        if (loaded.Count == 1) return loaded[0];
        if (loaded.Count == 0)
            findings.Error("NO_LOADS", "", "", "no load group of the analysis model holds a point action, so the reference load is empty");
        else
            findings.Error("LOAD_GROUP_NOT_CHOSEN", "", "", $"{loaded.Count} load groups hold point actions; choose the reference load group by name or GlobalId: {available}");
        return null;
    }

    /// <summary>The item's Name as its id; a missing or repeated name is replaced by prefix + entity number, with a finding.</summary>
    private static Dictionary<string, int> NameCounts(EntityAccess a, List<StepEntity> items) =>
        items.Select(e => a.OptionalString(e, 3, "Name") ?? "").GroupBy(n => n).ToDictionary(g => g.Key, g => g.Count());

    private static string IdOf(EntityAccess a, StepEntity e, string prefix, Dictionary<string, int> names, FindingSink findings)
    {
        string? name = a.OptionalString(e, 3, "Name");
        if (!string.IsNullOrWhiteSpace(name) && names[name] == 1) return name;
        string id = $"{prefix}{e.Number}";
        findings.Warning("NAME_REPLACED", FindingSink.Field(e.Number), id,
            string.IsNullOrWhiteSpace(name) ? $"#{e.Number} has no Name; its id is {id}" : $"the Name '{name}' of #{e.Number} is not unique; its id is {id}");
        return id;
    }
}
