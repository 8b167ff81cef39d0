namespace PathService.Engine.Model;

/// <summary>
/// Checks a <see cref="ModelDefinition"/> and returns every finding at once, so that a caller can fix all of
/// them in one round. Runs before any numerical work; the engine's numeric code assumes a validated model.
/// </summary>
public static class ModelValidator
{
    /// <summary>Largest magnitude accepted for any number (common practice, no source: catches unit slips and garbage, e.g. 1e308).</summary>
    public const double MaxMagnitude = 1e15;

    /// <summary>A bar shorter than this fraction of the model's extent is treated as zero length.</summary>
    public const double RelativeZeroLength = 1e-9;

    public static IReadOnlyList<ValidationFinding> Validate(ModelDefinition model)
    {
        var findings = new List<ValidationFinding>();
        var nodeIndex = CheckNodes(model, findings);
        double extent = ModelExtent(model);
        var touched = new bool[model.Nodes.Count];

        CheckBars(model, nodeIndex, extent, touched, findings);
        var rotating = BeamChecks.Check(model, nodeIndex, extent, touched, findings);
        CheckGroundSprings(model, nodeIndex, touched, rotating, findings);
        CheckLinkSprings(model, nodeIndex, touched, rotating, findings);
        var restrained = CheckSupports(model, nodeIndex, rotating, findings);
        CheckLoads(model, nodeIndex, restrained, rotating, findings);

        for (int i = 0; i < model.Nodes.Count; i++)
        {
            var n = model.Nodes[i];
            if (!touched[i] && !string.IsNullOrEmpty(n.Id))
                findings.Add(Error(FindingCode.UnconnectedNode, $"nodes[{i}]", n.Id,
                    $"node '{n.Id}' is not connected to any bar, beam or spring; remove it or connect it"));
        }
        return findings;
    }

    /// <summary>Throws <see cref="ModelValidationException"/> when any finding is an error.</summary>
    public static void ThrowIfInvalid(ModelDefinition model)
    {
        var findings = Validate(model);
        if (findings.Any(f => f.Severity == FindingSeverity.Error))
            throw new ModelValidationException(findings.Where(f => f.Severity == FindingSeverity.Error).ToList());
    }

    private static Dictionary<string, int> CheckNodes(ModelDefinition model, List<ValidationFinding> findings)
    {
        var index = new Dictionary<string, int>(StringComparer.Ordinal);
        if (model.Nodes.Count == 0)
            findings.Add(Error(FindingCode.EmptyModel, "nodes", null, "the model has no nodes"));
        if (model.Bars.Count == 0 && model.Beams.Count == 0 && model.GroundSprings.Count == 0 && model.LinkSprings.Count == 0)
            findings.Add(Error(FindingCode.EmptyModel, "bars", null, "the model has no bars, no beams and no springs"));

        for (int i = 0; i < model.Nodes.Count; i++)
        {
            var n = model.Nodes[i];
            string path = $"nodes[{i}]";
            if (string.IsNullOrWhiteSpace(n.Id))
            {
                findings.Add(Error(FindingCode.MissingId, $"{path}.id", null, $"node at position {i} has no id"));
                continue;
            }
            if (!index.TryAdd(n.Id, i))
                findings.Add(Error(FindingCode.DuplicateId, $"{path}.id", n.Id, $"node id '{n.Id}' is used more than once (first at nodes[{index[n.Id]}])"));
            CheckNumber(n.X, $"{path}.x", n.Id, "x coordinate", findings);
            CheckNumber(n.Y, $"{path}.y", n.Id, "y coordinate", findings);
            CheckNumber(n.Z, $"{path}.z", n.Id, "z coordinate", findings);
        }
        CheckCoincidentNodes(model, findings);
        return index;
    }

    private static void CheckCoincidentNodes(ModelDefinition model, List<ValidationFinding> findings)
    {
        // Exact coincidence only: two distinct joints at one point are almost always an export slip.
        var seen = new Dictionary<(double, double, double), int>();
        for (int i = 0; i < model.Nodes.Count; i++)
        {
            var n = model.Nodes[i];
            if (!double.IsFinite(n.X) || !double.IsFinite(n.Y) || !double.IsFinite(n.Z)) continue;
            var key = (n.X + 0.0, n.Y + 0.0, n.Z + 0.0);
            if (seen.TryGetValue(key, out int first))
                findings.Add(Warning(FindingCode.CoincidentNodes, $"nodes[{i}]", n.Id,
                    $"node '{n.Id}' lies at the same position as node '{model.Nodes[first].Id}'"));
            else
                seen[key] = i;
        }
    }

    private static double ModelExtent(ModelDefinition model)
    {
        double extent = 0;
        var finite = model.Nodes.Where(n => double.IsFinite(n.X) && double.IsFinite(n.Y) && double.IsFinite(n.Z)).ToList();
        if (finite.Count == 0) return 0;
        foreach (var sel in new Func<NodeDefinition, double>[] { n => n.X, n => n.Y, n => n.Z })
            extent = Math.Max(extent, finite.Max(sel) - finite.Min(sel));
        return extent;
    }

    private static void CheckBars(ModelDefinition model, Dictionary<string, int> nodes, double extent, bool[] touched, List<ValidationFinding> findings)
    {
        var ids = new Dictionary<string, int>(StringComparer.Ordinal);
        for (int b = 0; b < model.Bars.Count; b++)
        {
            var bar = model.Bars[b];
            string path = $"bars[{b}]";
            string? id = string.IsNullOrWhiteSpace(bar.Id) ? null : bar.Id;
            if (id is null)
                findings.Add(Error(FindingCode.MissingId, $"{path}.id", null, $"bar at position {b} has no id"));
            else if (!ids.TryAdd(id, b))
                findings.Add(Error(FindingCode.DuplicateId, $"{path}.id", id, $"bar id '{id}' is used more than once (first at bars[{ids[id]}])"));

            int i = ResolveNode(bar.StartNode, $"{path}.start_node", id, "bar", nodes, findings);
            int j = ResolveNode(bar.EndNode, $"{path}.end_node", id, "bar", nodes, findings);
            if (i >= 0) touched[i] = true;
            if (j >= 0) touched[j] = true;
            if (i >= 0 && i == j)
                findings.Add(Error(FindingCode.SameNodeAtBothEnds, $"{path}.end_node", id, $"bar '{id}' starts and ends at node '{bar.StartNode}'"));
            else if (i >= 0 && j >= 0)
            {
                var a = model.Nodes[i];
                var c = model.Nodes[j];
                double len = Math.Sqrt(Sq(c.X - a.X) + Sq(c.Y - a.Y) + Sq(c.Z - a.Z));
                if (double.IsFinite(len) && len <= RelativeZeroLength * Math.Max(extent, double.Epsilon))
                    findings.Add(Error(FindingCode.ZeroLengthBar, path, id,
                        $"bar '{id}' has zero length: nodes '{bar.StartNode}' and '{bar.EndNode}' coincide"));
            }
            if (CheckNumber(bar.ElasticModulus, $"{path}.elastic_modulus", id, "elastic modulus", findings) && bar.ElasticModulus <= 0)
                findings.Add(Error(FindingCode.NonPositiveStiffness, $"{path}.elastic_modulus", id,
                    $"bar '{id}' has elastic modulus {bar.ElasticModulus}; it must be positive"));
            if (CheckNumber(bar.Area, $"{path}.area", id, "area", findings) && bar.Area <= 0)
                findings.Add(Error(FindingCode.NonPositiveArea, $"{path}.area", id,
                    $"bar '{id}' has cross-section area {bar.Area}; it must be positive"));
            CheckNumber(bar.InitialStress, $"{path}.initial_stress", id, "initial stress", findings);
            if (bar.Behavior is not (Elements.BarBehavior.Elastic or Elements.BarBehavior.TensionOnly or Elements.BarBehavior.CompressionOnly))
                findings.Add(Error(FindingCode.UnknownOption, $"{path}.behavior", id, $"bar '{id}' has an unknown behavior {(int)bar.Behavior}"));
            if (CheckNumber(bar.YieldStress, $"{path}.yield_stress", id, "yield stress", findings) && bar.YieldStress < 0)
                findings.Add(Error(FindingCode.MemberPropertyOutOfRange, $"{path}.yield_stress", id, $"bar '{id}' has yield stress {bar.YieldStress}; give a positive value, or 0 for no yielding"));
            if (CheckNumber(bar.SecondMoment, $"{path}.second_moment", id, "second moment of area", findings) && bar.SecondMoment < 0)
                findings.Add(Error(FindingCode.MemberPropertyOutOfRange, $"{path}.second_moment", id, $"bar '{id}' has second moment of area {bar.SecondMoment}; give a positive value, or 0 for no buckling check"));
            if (CheckNumber(bar.EffectiveLengthFactor, $"{path}.effective_length_factor", id, "effective-length factor", findings) && bar.EffectiveLengthFactor <= 0)
                findings.Add(Error(FindingCode.MemberPropertyOutOfRange, $"{path}.effective_length_factor", id, $"bar '{id}' has effective-length factor {bar.EffectiveLengthFactor}; it must be positive"));
            if (CheckNumber(bar.Density, $"{path}.density", id, "density", findings) && bar.Density < 0)
                findings.Add(Error(FindingCode.NegativeDensity, $"{path}.density", id, $"bar '{id}' has density {bar.Density}; it must be zero or positive"));
        }
    }

    private static void CheckGroundSprings(ModelDefinition model, Dictionary<string, int> nodes, bool[] touched, bool[] rotating, List<ValidationFinding> findings)
    {
        var ids = new Dictionary<string, int>(StringComparer.Ordinal);
        for (int s = 0; s < model.GroundSprings.Count; s++)
        {
            var sp = model.GroundSprings[s];
            string path = $"ground_springs[{s}]";
            string? id = CheckSpringId(sp.Id, path, s, ids, findings);
            int i = ResolveNode(sp.Node, $"{path}.node", id, "spring", nodes, findings);
            if (i >= 0) touched[i] = true;
            if (CheckAxis(sp.Direction, $"{path}.direction", id, findings) && i >= 0)
                CheckRotationAvailable(sp.Direction, i, sp.Node, rotating, $"{path}.direction", id, $"spring '{id}'", findings);
            if (CheckNumber(sp.Stiffness, $"{path}.stiffness", id, "stiffness", findings) && sp.Stiffness <= 0)
                findings.Add(Error(FindingCode.NonPositiveStiffness, $"{path}.stiffness", id,
                    $"spring '{id}' has stiffness {sp.Stiffness}; it must be positive"));
        }
    }

    private static void CheckLinkSprings(ModelDefinition model, Dictionary<string, int> nodes, bool[] touched, bool[] rotating, List<ValidationFinding> findings)
    {
        var ids = new Dictionary<string, int>(StringComparer.Ordinal);
        for (int s = 0; s < model.LinkSprings.Count; s++)
        {
            var sp = model.LinkSprings[s];
            string path = $"link_springs[{s}]";
            string? id = CheckSpringId(sp.Id, path, s, ids, findings);
            int i = ResolveNode(sp.StartNode, $"{path}.start_node", id, "spring", nodes, findings);
            int j = ResolveNode(sp.EndNode, $"{path}.end_node", id, "spring", nodes, findings);
            if (i >= 0) touched[i] = true;
            if (j >= 0) touched[j] = true;
            if (i >= 0 && i == j)
                findings.Add(Error(FindingCode.SameNodeAtBothEnds, $"{path}.end_node", id, $"spring '{id}' starts and ends at node '{sp.StartNode}'"));
            if (CheckAxis(sp.Direction, $"{path}.direction", id, findings))
            {
                if (i >= 0) CheckRotationAvailable(sp.Direction, i, sp.StartNode, rotating, $"{path}.direction", id, $"spring '{id}'", findings);
                if (j >= 0 && j != i) CheckRotationAvailable(sp.Direction, j, sp.EndNode, rotating, $"{path}.direction", id, $"spring '{id}'", findings);
            }
            if (CheckNumber(sp.Stiffness, $"{path}.stiffness", id, "stiffness", findings) && sp.Stiffness <= 0)
                findings.Add(Error(FindingCode.NonPositiveStiffness, $"{path}.stiffness", id,
                    $"spring '{id}' has stiffness {sp.Stiffness}; it must be positive"));
        }
    }

    private static HashSet<(int, Axis)> CheckSupports(ModelDefinition model, Dictionary<string, int> nodes, bool[] rotating, List<ValidationFinding> findings)
    {
        var seen = new HashSet<(int, Axis)>();
        for (int s = 0; s < model.Supports.Count; s++)
        {
            var sup = model.Supports[s];
            string path = $"supports[{s}]";
            int i = ResolveNode(sup.Node, $"{path}.node", sup.Node, "support", nodes, findings);
            bool axisOk = CheckAxis(sup.Direction, $"{path}.direction", sup.Node, findings);
            CheckNumber(sup.PrescribedDisplacement, $"{path}.prescribed_displacement", sup.Node, "prescribed displacement", findings);
            if (i >= 0 && axisOk && !seen.Add((i, sup.Direction)))
                findings.Add(Error(FindingCode.DuplicateSupport, path, sup.Node,
                    $"node '{sup.Node}' is restrained in {sup.Direction} more than once"));
            // A rotational restraint at a node without rotational unknowns restrains nothing: say so, and go on
            // (a generated model often fixes all six directions at every support, whatever connects there).
            if (i >= 0 && axisOk && IsRotation(sup.Direction) && !rotating[i])
                findings.Add(Warning(FindingCode.RotationWithoutRotationalUnknowns, $"{path}.direction", sup.Node,
                    $"node '{sup.Node}' has no rotational unknowns (no beam end holding a rotation connects to it); the restraint in {sup.Direction} is ignored"));
        }
        return seen;
    }

    private static void CheckLoads(ModelDefinition model, Dictionary<string, int> nodes, HashSet<(int, Axis)> restrained, bool[] rotating, List<ValidationFinding> findings)
    {
        double referenceSize = 0;
        foreach (var (list, name) in new[] { (model.Loads.Constant, "loads.constant"), (model.Loads.Reference, "loads.reference") })
        {
            for (int l = 0; l < list.Count; l++)
            {
                var load = list[l];
                string path = $"{name}[{l}]";
                int i = ResolveNode(load.Node, $"{path}.node", load.Node, "load", nodes, findings);
                bool fx = CheckNumber(load.Fx, $"{path}.fx", load.Node, "force x", findings);
                bool fy = CheckNumber(load.Fy, $"{path}.fy", load.Node, "force y", findings);
                bool fz = CheckNumber(load.Fz, $"{path}.fz", load.Node, "force z", findings);
                bool moments = CheckMoments(load, path, i, rotating, findings);
                if (name == "loads.reference" && fx && fy && fz && moments)
                    referenceSize += Math.Abs(load.Fx) + Math.Abs(load.Fy) + Math.Abs(load.Fz) + Math.Abs(load.Mx) + Math.Abs(load.My) + Math.Abs(load.Mz);
                if (i < 0) continue;
                double[] f = [load.Fx, load.Fy, load.Fz, load.Mx, load.My, load.Mz];
                for (int d = 0; d < 6; d++)
                    if (f[d] != 0 && restrained.Contains((i, (Axis)d)))
                        findings.Add(Warning(FindingCode.LoadOnRestrainedDirection, path, load.Node,
                            $"load on node '{load.Node}' in {(Axis)d} acts on a restrained direction and goes straight into the reaction"));
            }
        }
        referenceSize += CheckCombination(model, nodes, rotating, findings);
        if (referenceSize == 0)
            findings.Add(Error(FindingCode.NoReferenceLoad, "loads.reference", null,
                "the reference load (the part scaled by the load factor) is empty or zero; give at least one non-zero nodal force"));
    }

    /// <returns>A size measure of the combination's reference part (0 when it adds nothing).</returns>
    private static double CheckCombination(ModelDefinition model, Dictionary<string, int> nodes, bool[] rotating, List<ValidationFinding> findings)
    {
        var sizes = new Dictionary<string, double>(StringComparer.Ordinal);
        for (int p = 0; p < model.LoadSets.Count; p++)
        {
            var set = model.LoadSets[p];
            string path = $"load_sets[{p}]";
            if (string.IsNullOrWhiteSpace(set.Name)) { findings.Add(Error(FindingCode.MissingId, $"{path}.name", null, $"load set at position {p} has no name")); continue; }
            if (sizes.ContainsKey(set.Name)) { findings.Add(Error(FindingCode.DuplicateId, $"{path}.name", set.Name, $"load set name '{set.Name}' is used more than once")); continue; }
            double size = 0;
            for (int l = 0; l < set.Loads.Count; l++)
            {
                var load = set.Loads[l];
                string lp = $"{path}.loads[{l}]";
                int node = ResolveNode(load.Node, $"{lp}.node", load.Node, "load", nodes, findings);
                if (CheckNumber(load.Fx, $"{lp}.fx", load.Node, "force x", findings) & CheckNumber(load.Fy, $"{lp}.fy", load.Node, "force y", findings)
                    & CheckNumber(load.Fz, $"{lp}.fz", load.Node, "force z", findings) & CheckMoments(load, lp, node, rotating, findings))
                    size += Math.Abs(load.Fx) + Math.Abs(load.Fy) + Math.Abs(load.Fz) + Math.Abs(load.Mx) + Math.Abs(load.My) + Math.Abs(load.Mz);
            }
            if (set.SelfWeight)
            {
                double weight = model.Bars.Where(b => double.IsFinite(b.Density) && b.Density > 0).Sum(b => b.Density * Math.Abs(b.Area));
                if (weight == 0)
                    findings.Add(Warning(FindingCode.SelfWeightWithoutDensity, $"{path}.self_weight", set.Name, $"load set '{set.Name}' asks for self-weight but no bar has a density"));
                size += weight;
            }
            sizes[set.Name] = size;
        }
        var (gx, gy, gz) = model.Gravity;
        if (!double.IsFinite(gx) || !double.IsFinite(gy) || !double.IsFinite(gz))
            findings.Add(Error(FindingCode.NonFiniteNumber, "gravity", null, "the gravity vector must be finite"));
        if (model.Combination is not { } combo) return 0;
        double reference = 0;
        foreach (var (list, part) in new[] { (combo.Constant, "constant"), (combo.Reference, "reference") })
            for (int i = 0; i < list.Count; i++)
            {
                string path = $"combination.{part}[{i}]";
                if (!sizes.TryGetValue(list[i].LoadSet ?? "", out double size))
                {
                    if (!model.LoadSets.Any(p => p.Name == list[i].LoadSet))
                        findings.Add(Error(FindingCode.UnknownLoadSet, $"{path}.load_set", list[i].LoadSet, $"combination '{combo.Name}' refers to load set '{list[i].LoadSet}', which is not defined"));
                    continue;
                }
                if (CheckNumber(list[i].Factor, $"{path}.factor", list[i].LoadSet, "factor", findings) && part == "reference")
                    reference += Math.Abs(list[i].Factor) * size;
            }
        return reference;
    }

    private static string? CheckSpringId(string? id, string path, int position, Dictionary<string, int> ids, List<ValidationFinding> findings)
    {
        if (string.IsNullOrWhiteSpace(id))
        {
            findings.Add(Error(FindingCode.MissingId, $"{path}.id", null, $"spring at position {position} has no id"));
            return null;
        }
        if (!ids.TryAdd(id, position))
            findings.Add(Error(FindingCode.DuplicateId, $"{path}.id", id, $"spring id '{id}' is used more than once (first at position {ids[id]})"));
        return id;
    }

    internal static int ResolveNode(string? node, string path, string? itemId, string what, Dictionary<string, int> nodes, List<ValidationFinding> findings)
    {
        if (string.IsNullOrWhiteSpace(node))
        {
            findings.Add(Error(FindingCode.UnknownNode, path, itemId, $"{what} {(itemId is null ? "" : $"'{itemId}' ")}does not name a node"));
            return -1;
        }
        if (nodes.TryGetValue(node, out int i)) return i;
        findings.Add(Error(FindingCode.UnknownNode, path, itemId, $"{what} {(itemId is null ? "" : $"'{itemId}' ")}refers to node '{node}', which is not defined"));
        return -1;
    }

    private static bool CheckAxis(Axis axis, string path, string? itemId, List<ValidationFinding> findings)
    {
        if (axis is Axis.X or Axis.Y or Axis.Z or Axis.RotationX or Axis.RotationY or Axis.RotationZ) return true;
        findings.Add(Error(FindingCode.InvalidDirection, path, itemId, (int)axis == int.MinValue
            ? "direction is not set (give x, y, z or a rotation about x, y, z)"
            : $"direction {(int)axis} is not one of x, y, z (0..2) or the rotations about x, y, z (3..5)"));
        return false;
    }

    internal static bool IsRotation(Axis axis) => axis is Axis.RotationX or Axis.RotationY or Axis.RotationZ;

    /// <summary>A rotational spring needs rotational unknowns at its node: without a beam holding a rotation there, the
    /// rotation would be a free-standing unknown that only the spring sees.</summary>
    private static void CheckRotationAvailable(Axis axis, int node, string nodeId, bool[] rotating, string path, string? itemId, string what, List<ValidationFinding> findings)
    {
        if (IsRotation(axis) && !rotating[node])
            findings.Add(Error(FindingCode.RotationWithoutRotationalUnknowns, path, itemId,
                $"{what} acts on {axis} of node '{nodeId}', which has no rotational unknowns (no beam end holding a rotation connects to it)"));
    }

    /// <returns>true when all three moment components are finite numbers of sane magnitude.</returns>
    private static bool CheckMoments(NodalLoad load, string path, int node, bool[] rotating, List<ValidationFinding> findings)
    {
        bool ok = CheckNumber(load.Mx, $"{path}.mx", load.Node, "moment x", findings)
            & CheckNumber(load.My, $"{path}.my", load.Node, "moment y", findings)
            & CheckNumber(load.Mz, $"{path}.mz", load.Node, "moment z", findings);
        if (ok && node >= 0 && load.HasMoment && !rotating[node])
            findings.Add(Error(FindingCode.RotationWithoutRotationalUnknowns, $"{path}.{(load.Mx != 0 ? "mx" : load.My != 0 ? "my" : "mz")}", load.Node,
                $"a moment acts on node '{load.Node}', which has no rotational unknowns (no beam end holding a rotation connects to it)"));
        return ok;
    }

    /// <returns>true when the number is finite and of a sane magnitude.</returns>
    internal static bool CheckNumber(double value, string path, string? itemId, string what, List<ValidationFinding> findings)
    {
        if (!double.IsFinite(value))
        {
            findings.Add(Error(FindingCode.NonFiniteNumber, path, itemId, $"{what} of '{itemId}' is {value}; it must be a finite number"));
            return false;
        }
        if (Math.Abs(value) > MaxMagnitude)
        {
            findings.Add(Error(FindingCode.MagnitudeBeyondLimit, path, itemId, $"{what} of '{itemId}' is {value:G4}, beyond ±{MaxMagnitude:G1}; check the units"));
            return false;
        }
        return true;
    }

    internal static double Sq(double v) => v * v;
    internal static ValidationFinding Error(FindingCode code, string path, string? id, string message) => new(FindingSeverity.Error, code, path, id, message);
    internal static ValidationFinding Warning(FindingCode code, string path, string? id, string message) => new(FindingSeverity.Warning, code, path, id, message);
}
