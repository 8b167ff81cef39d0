using System.Text;
using PathService.Contracts.V1;
using PathService.Ifc.Mapping;
using static PathService.Ifc.Writing.StepText;

namespace PathService.Ifc.Writing;

/// <summary>
/// Writes a StructureModel and LoadCase as an IFC4 exchange structure holding the subset <see cref="IfcImport"/> reads
/// (ISO 16739-1:2018): the units of the model's labels (IfcUnitAssignment), one IfcStructuralAnalysisModel with a
/// shared placement, an IfcStructuralPointConnection per node (IfcVertexPoint topology) with its
/// IfcBoundaryNodeCondition, an IfcStructuralCurveMember per bar (IfcEdge topology, two IfcRelConnectsStructuralMember),
/// its IfcMaterial with Pset_MaterialMechanical.YoungModulus and an IfcMaterialProfileSetUsage whose profile states
/// its area (Pset_ProfileMechanical.CrossSectionArea), and the constant and reference loads as two
/// IfcStructuralLoadGroup of IfcStructuralPointAction with IfcStructuralLoadSingleForce. Output is deterministic.
/// What the subset cannot carry is returned as findings.
/// </summary>
public static class IfcExport
{
    public static IReadOnlyList<Finding> Write(StructureModel model, LoadCase loads, TextWriter output, IfcExportOptions? options = null)
    {
        ArgumentNullException.ThrowIfNull(model);
        loads ??= new LoadCase();
        options ??= new IfcExportOptions();
        string force = string.IsNullOrEmpty(model.Units?.Force) ? "kN" : model.Units.Force;
        string length = string.IsNullOrEmpty(model.Units?.Length) ? "m" : model.Units.Length;
        if (!UnitScales.ForceLabels.ContainsKey(force))
            throw new ArgumentException($"the model's force unit '{force}' cannot be written as an IFC unit; use one of {string.Join(", ", UnitScales.ForceLabels.Keys)}", nameof(model));
        if (!UnitScales.LengthLabels.ContainsKey(length))
            throw new ArgumentException($"the model's length unit '{length}' cannot be written as an IFC unit; use one of {string.Join(", ", UnitScales.LengthLabels.Keys)}", nameof(model));
        var findings = new FindingSink();
        Report(model, loads, findings);
        string name = string.IsNullOrWhiteSpace(model.Name) ? "model" : model.Name;
        string Gid(string kind, string id) => Str(GlobalIds.For($"{name}\u0001{kind}\u0001{id}"));

        output.Write("ISO-10303-21;\nHEADER;\n");
        output.Write("FILE_DESCRIPTION(('ViewDefinition [StructuralAnalysisView]'),'2;1');\n");
        output.Write($"FILE_NAME({Str(name)},{Str(options.TimeStamp)},(''),(''),'PathService.Ifc','PathService.Ifc','');\n");
        output.Write("FILE_SCHEMA(('IFC4'));\nENDSEC;\nDATA;\n");
        var w = new StepText(output);

        // Units: the model's labels as SI units with prefixes, and the derived units of modulus and stiffness.
        string? lengthPrefix = length switch { "mm" => "MILLI", "cm" => "CENTI", _ => null };
        string? forcePrefix = force switch { "kN" => "KILO", "MN" => "MEGA", _ => null };
        string P(string? p) => p is null ? Unset : Enum(p);
        int lengthUnit = w.Add("IFCSIUNIT", Derived, Enum("LENGTHUNIT"), P(lengthPrefix), Enum("METRE"));
        int forceUnit = w.Add("IFCSIUNIT", Derived, Enum("FORCEUNIT"), P(forcePrefix), Enum("NEWTON"));
        int areaUnit = w.Add("IFCSIUNIT", Derived, Enum("AREAUNIT"), P(lengthPrefix), Enum("SQUARE_METRE"));
        int f1 = w.Add("IFCDERIVEDUNITELEMENT", Ref(forceUnit), "1");
        int lm2 = w.Add("IFCDERIVEDUNITELEMENT", Ref(lengthUnit), "-2");
        int lm1 = w.Add("IFCDERIVEDUNITELEMENT", Ref(lengthUnit), "-1");
        int modulusUnit = w.Add("IFCDERIVEDUNIT", Refs([f1, lm2]), Enum("MODULUSOFELASTICITYUNIT"), Unset);
        int stiffnessUnit = w.Add("IFCDERIVEDUNIT", Refs([f1, lm1]), Enum("LINEARSTIFFNESSUNIT"), Unset);
        int unitAssignment = w.Add("IFCUNITASSIGNMENT", Refs([lengthUnit, forceUnit, areaUnit, modulusUnit, stiffnessUnit]));

        int origin = w.Add("IFCCARTESIANPOINT", List([Real(0), Real(0), Real(0)]));
        int world = w.Add("IFCAXIS2PLACEMENT3D", Ref(origin), Unset, Unset);
        int context = w.Add("IFCGEOMETRICREPRESENTATIONCONTEXT", Unset, Str("Model"), "3", Real(1e-5), Ref(world), Unset);
        w.Add("IFCPROJECT", Gid("project", ""), Unset, Str(name), Unset, Unset, Unset, Unset, Refs([context]), Ref(unitAssignment));
        int placement = w.Add("IFCLOCALPLACEMENT", Unset, Ref(world));

        // Connections with their boundary conditions.
        var vertexOf = new Dictionary<string, int>();
        var connectionOf = new Dictionary<string, int>();
        foreach (var node in model.Nodes)
        {
            int pt = w.Add("IFCCARTESIANPOINT", List([Real(node.X), Real(node.Y), Real(node.Z)]));
            int vp = w.Add("IFCVERTEXPOINT", Ref(pt));
            int rep = w.Add("IFCTOPOLOGYREPRESENTATION", Ref(context), Str("Reference"), Str("Vertex"), Refs([vp]));
            int shape = w.Add("IFCPRODUCTDEFINITIONSHAPE", Unset, Unset, Refs([rep]));
            string condition = Unset;
            var stiffness = new string[3];
            bool any = false;
            for (int d = 0; d < 3; d++)
            {
                var dir = (Direction)(d + 1);
                if (model.Supports.Any(s => s.Node == node.Id && s.Direction == dir)) { stiffness[d] = Typed("IFCBOOLEAN", ".T."); any = true; }
                else if (model.GroundSprings.Where(s => s.Node == node.Id && s.Direction == dir).Sum(s => s.Stiffness) is var k && k != 0)
                {
                    stiffness[d] = Typed("IFCLINEARSTIFFNESSMEASURE", Real(k));
                    any = true;
                }
                else stiffness[d] = Typed("IFCBOOLEAN", ".F.");
            }
            if (any)
                {
                // Rotations written free (IfcBoolean FALSE): the joints of a pin-jointed truss hold no moment.
                string free = Typed("IFCBOOLEAN", ".F.");
                condition = Ref(w.Add("IFCBOUNDARYNODECONDITION", Str(node.Id), stiffness[0], stiffness[1], stiffness[2], free, free, free));
            }
            vertexOf[node.Id] = vp;
            connectionOf[node.Id] = w.Add("IFCSTRUCTURALPOINTCONNECTION", Gid("node", node.Id), Unset, Str(node.Id), Unset, Unset,
                Ref(placement), Ref(shape), condition, Unset);
        }

        // Members with their edges and connection relationships.
        var memberOf = new Dictionary<string, int>();
        var nodeById = model.Nodes.GroupBy(n => n.Id).ToDictionary(g => g.Key, g => g.First());
        foreach (var bar in model.Bars)
        {
            if (!vertexOf.TryGetValue(bar.StartNode, out int vs) || !vertexOf.TryGetValue(bar.EndNode, out int ve))
            {
                findings.Error("UNKNOWN_NODE", $"model.bars[{model.Bars.IndexOf(bar)}]", bar.Id, $"bar {bar.Id} names a node the model does not have; it is not written");
                continue;
            }
            int edge = w.Add("IFCEDGE", Ref(vs), Ref(ve));
            int rep = w.Add("IFCTOPOLOGYREPRESENTATION", Ref(context), Str("Reference"), Str("Edge"), Refs([edge]));
            int shape = w.Add("IFCPRODUCTDEFINITIONSHAPE", Unset, Unset, Refs([rep]));
            var (ax, ay, az) = Perpendicular(nodeById[bar.StartNode], nodeById[bar.EndNode]);
            int axis = w.Add("IFCDIRECTION", List([Real(ax), Real(ay), Real(az)]));
            string type = bar.Behavior switch
            {
                BarBehavior.TensionOnly => "TENSION_MEMBER",
                BarBehavior.CompressionOnly => "COMPRESSION_MEMBER",
                _ => "PIN_JOINED_MEMBER",
            };
            int member = w.Add("IFCSTRUCTURALCURVEMEMBER", Gid("bar", bar.Id), Unset, Str(bar.Id), Unset, Unset, Ref(placement), Ref(shape), Enum(type), Ref(axis));
            memberOf[bar.Id] = member;
            foreach (var (end, node) in new[] { ("start", bar.StartNode), ("end", bar.EndNode) })
                w.Add("IFCRELCONNECTSSTRUCTURALMEMBER", Gid($"bar-{end}", bar.Id), Unset, Unset, Unset, Ref(member), Ref(connectionOf[node]), Unset, Unset, Unset, Unset);
        }

        // Materials (one per E), profiles (one per A) and one profile set usage per (E, A) pair.
        var materialOf = new Dictionary<double, int>();
        var profileOf = new Dictionary<double, int>();
        foreach (var group in model.Bars.Where(b => memberOf.ContainsKey(b.Id)).GroupBy(b => (b.ElasticModulus, b.Area)))
        {
            var (e, a) = group.Key;
            if (!materialOf.TryGetValue(e, out int material))
            {
                material = w.Add("IFCMATERIAL", Str($"E {Real(e)}"), Unset, Unset);
                int prop = w.Add("IFCPROPERTYSINGLEVALUE", Str("YoungModulus"), Unset, Typed("IFCMODULUSOFELASTICITYMEASURE", Real(e)), Unset);
                w.Add("IFCMATERIALPROPERTIES", Str("Pset_MaterialMechanical"), Unset, Refs([prop]), Ref(material));
                materialOf[e] = material;
            }
            if (!profileOf.TryGetValue(a, out int profile))
            {
                profile = w.Add("IFCPROFILEDEF", Enum("AREA"), Str($"A {Real(a)}"));
                int prop = w.Add("IFCPROPERTYSINGLEVALUE", Str("CrossSectionArea"), Unset, Typed("IFCAREAMEASURE", Real(a)), Unset);
                w.Add("IFCPROFILEPROPERTIES", Str("Pset_ProfileMechanical"), Unset, Refs([prop]), Ref(profile));
                profileOf[a] = profile;
            }
            int mp = w.Add("IFCMATERIALPROFILE", Unset, Unset, Ref(material), Ref(profile), Unset, Unset);
            int set = w.Add("IFCMATERIALPROFILESET", Unset, Unset, Refs([mp]), Unset);
            int usage = w.Add("IFCMATERIALPROFILESETUSAGE", Ref(set), Unset, Unset);
            w.Add("IFCRELASSOCIATESMATERIAL", Gid("material", $"{Real(e)}|{Real(a)}"), Unset, Unset, Unset, Refs(group.Select(b => memberOf[b.Id])), Ref(usage));
        }

        // Load groups.
        var groups = new List<int>();
        void WriteGroup(string groupName, IList<NodalLoad> groupLoads)
        {
            int group = w.Add("IFCSTRUCTURALLOADGROUP", Gid("group", groupName), Unset, Str(groupName), Unset, Unset,
                Enum("LOAD_GROUP"), Enum("NOTDEFINED"), Enum("NOTDEFINED"), Unset, Unset);
            groups.Add(group);
            var actions = new List<int>();
            for (int i = 0; i < groupLoads.Count; i++)
            {
                var l = groupLoads[i];
                if (!connectionOf.TryGetValue(l.Node, out int conn))
                {
                    findings.Error("UNKNOWN_NODE", $"load_case.{groupName}[{i}]", l.Node, $"load {i} of '{groupName}' names node '{l.Node}', which the model does not have; it is not written");
                    continue;
                }
                int force = w.Add("IFCSTRUCTURALLOADSINGLEFORCE", Str($"{groupName} {i + 1}"), Real(l.Fx), Real(l.Fy), Real(l.Fz), Unset, Unset, Unset);
                int action = w.Add("IFCSTRUCTURALPOINTACTION", Gid($"action-{groupName}", i.ToString(System.Globalization.CultureInfo.InvariantCulture)), Unset,
                    Str($"{groupName} {i + 1}"), Unset, Unset, Ref(placement), Unset, Ref(force), Enum("GLOBAL_COORDS"), Unset);
                w.Add("IFCRELCONNECTSSTRUCTURALACTIVITY", Gid($"acts-{groupName}", i.ToString(System.Globalization.CultureInfo.InvariantCulture)), Unset, Unset, Unset, Ref(conn), Ref(action));
                actions.Add(action);
            }
            if (actions.Count > 0)
                w.Add("IFCRELASSIGNSTOGROUP", Gid("assign", groupName), Unset, Unset, Unset, Refs(actions), Unset, Ref(group));
        }
        if (loads.Constant.Count > 0) WriteGroup(options.ConstantLoadGroup, loads.Constant);
        WriteGroup(options.ReferenceLoadGroup, loads.Reference);

        int analysis = w.Add("IFCSTRUCTURALANALYSISMODEL", Gid("analysis", ""), Unset, Str(name), Unset, Unset, Enum("LOADING_3D"), Unset,
            Refs(groups), Unset, Ref(placement));
        w.Add("IFCRELASSIGNSTOGROUP", Gid("assign-model", ""), Unset, Unset, Unset, Refs(connectionOf.Values.Concat(memberOf.Values)), Unset, Ref(analysis));
        output.Write("ENDSEC;\nEND-ISO-10303-21;\n");
        return findings.Items;
    }

    /// <summary>Writes to a string (UTF-8 content; the file is 7-bit ASCII since other characters are \X2\-encoded).</summary>
    public static (string Text, IReadOnlyList<Finding> Findings) WriteToString(StructureModel model, LoadCase loads, IfcExportOptions? options = null)
    {
        var sw = new StringWriter(new StringBuilder(), System.Globalization.CultureInfo.InvariantCulture) { NewLine = "\n" };
        var findings = Write(model, loads, sw, options);
        return (sw.ToString(), findings);
    }

    /// <summary>A unit vector perpendicular to the bar (IfcStructuralCurveMember.Axis is required in IFC4; a bar has no section orientation).</summary>
    private static (double, double, double) Perpendicular(Node a, Node b)
    {
        double dx = b.X - a.X, dy = b.Y - a.Y, dz = b.Z - a.Z;
        double len = Math.Sqrt(dx * dx + dy * dy + dz * dz);
        if (len == 0) return (0, 0, 1);
        dx /= len; dy /= len; dz /= len;
        // Global z projected off the bar, or global x for a vertical bar.
        var (rx, ry, rz) = Math.Abs(dz) < 0.9 ? (0.0, 0.0, 1.0) : (1.0, 0.0, 0.0);
        double dot = rx * dx + ry * dy + rz * dz;
        double px = rx - dot * dx, py = ry - dot * dy, pz = rz - dot * dz;
        double pl = Math.Sqrt(px * px + py * py + pz * pz);
        return (px / pl, py / pl, pz / pl);
    }

    private static void Report(StructureModel model, LoadCase loads, FindingSink findings)
    {
        for (int i = 0; i < model.LinkSprings.Count; i++)
            findings.Warning("LINK_SPRING_NOT_WRITTEN", $"model.link_springs[{i}]", model.LinkSprings[i].Id, "springs between nodes have no counterpart in the written IFC subset");
        for (int i = 0; i < model.Supports.Count; i++)
        {
            var s = model.Supports[i];
            if (s.PrescribedDisplacement != 0)
                findings.Warning("PRESCRIBED_DISPLACEMENT_NOT_WRITTEN", $"model.supports[{i}].prescribed_displacement", s.Node, "a boundary node condition holds no prescribed displacement; the support is written as fixed");
        }
        for (int i = 0; i < model.GroundSprings.Count; i++)
        {
            var s = model.GroundSprings[i];
            string expected = $"{s.Node}-k{"xyz"[Math.Clamp((int)s.Direction - 1, 0, 2)]}";
            if (s.Id != expected)
                findings.Warning("SPRING_ID_NOT_KEPT", $"model.ground_springs[{i}].id", s.Id, $"IFC keeps a stiffness per node and direction, not a spring id; it reads back as '{expected}'");
            if (model.Supports.Any(p => p.Node == s.Node && p.Direction == s.Direction))
                findings.Warning("SPRING_UNDER_SUPPORT", $"model.ground_springs[{i}]", s.Id, "the direction is also supported; the support is written");
        }
        var barEnds = model.Bars.SelectMany(b => new[] { b.StartNode, b.EndNode }).ToHashSet();
        for (int i = 0; i < model.Nodes.Count; i++)
            if (!barEnds.Contains(model.Nodes[i].Id))
                findings.Warning("NODE_WITHOUT_BAR", $"model.nodes[{i}]", model.Nodes[i].Id, "the node joins no bar; it is written but the import leaves such connections out");
        for (int i = 0; i < model.Bars.Count; i++)
        {
            var b = model.Bars[i];
            string f = $"model.bars[{i}]";
            if (b.InitialStress != 0) findings.Warning("BAR_FIELD_NOT_WRITTEN", f + ".initial_stress", b.Id, "prestress is not written");
            if (b.Density != 0) findings.Warning("BAR_FIELD_NOT_WRITTEN", f + ".density", b.Id, "density is not written");
            if (b.YieldStress != 0) findings.Warning("BAR_FIELD_NOT_WRITTEN", f + ".yield_stress", b.Id, "yield stress is not written");
            if (b.SecondMoment != 0) findings.Warning("BAR_FIELD_NOT_WRITTEN", f + ".second_moment", b.Id, "second moment of area is not written");
            if (b.HasEffectiveLengthFactor) findings.Warning("BAR_FIELD_NOT_WRITTEN", f + ".effective_length_factor", b.Id, "effective-length factor is not written");
        }
        if (loads.LoadSets.Count > 0 || loads.Combination is not null)
            findings.Warning("COMBINATION_NOT_WRITTEN", "load_case.patterns", "", "load patterns and combinations are not written; only the constant and reference loads are");
        if (loads.Gravity is not null)
            findings.Warning("GRAVITY_NOT_WRITTEN", "load_case.gravity", "", "the gravity vector is not written");
    }
}
