using static PathService.Engine.Model.ModelValidator;

namespace PathService.Engine.Model;

/// <summary>
/// Validation of the beams of a <see cref="ModelDefinition"/> (part of <see cref="ModelValidator"/>): ids, end nodes,
/// section, orientation, releases, subdivision and bow. Also decides which nodes carry rotational unknowns, by the rule
/// of <see cref="DofMap"/>: a node rotates iff a beam end holding some rotation connects to it (intermediate nodes of
/// a subdivided member always do).
/// </summary>
internal static class BeamChecks
{
    /// <summary>Largest number of elements one member may be divided into (common practice, no source: 4–10 resolve
    /// member buckling; beyond 100 a subdivision is almost surely a slip).</summary>
    public const int MaxSubdivisions = 100;

    /// <summary>An orientation vector within this angle's sine of the member axis is treated as parallel.</summary>
    public const double ParallelSine = 1e-6;

    /// <returns>For each node, whether it carries rotational unknowns.</returns>
    public static bool[] Check(ModelDefinition model, Dictionary<string, int> nodes, double extent, bool[] touched, List<ValidationFinding> findings)
    {
        var rotating = new bool[model.Nodes.Count];
        var ids = new Dictionary<string, int>(StringComparer.Ordinal);
        var barIds = new HashSet<string>(model.Bars.Where(b => !string.IsNullOrWhiteSpace(b.Id)).Select(b => b.Id), StringComparer.Ordinal);
        for (int b = 0; b < model.Beams.Count; b++)
        {
            var beam = model.Beams[b];
            string path = $"beams[{b}]";
            string? id = string.IsNullOrWhiteSpace(beam.Id) ? null : beam.Id;
            if (id is null)
                findings.Add(Error(FindingCode.MissingId, $"{path}.id", null, $"beam at position {b} has no id"));
            else if (!ids.TryAdd(id, b))
                findings.Add(Error(FindingCode.DuplicateId, $"{path}.id", id, $"beam id '{id}' is used more than once (first at beams[{ids[id]}])"));
            else if (barIds.Contains(id))
                findings.Add(Error(FindingCode.DuplicateId, $"{path}.id", id, $"beam id '{id}' is also a bar id; member ids must be unique over bars and beams"));

            int i = ResolveNode(beam.StartNode, $"{path}.start_node", id, "beam", nodes, findings);
            int j = ResolveNode(beam.EndNode, $"{path}.end_node", id, "beam", nodes, findings);
            if (i >= 0) touched[i] = true;
            if (j >= 0) touched[j] = true;
            var startReleases = beam.StartReleases ?? BeamEndReleases.Rigid;
            var endReleases = beam.EndReleases ?? BeamEndReleases.Rigid;
            if (i >= 0 && startReleases.HoldsRotation) rotating[i] = true;
            if (j >= 0 && endReleases.HoldsRotation) rotating[j] = true;

            double[] axis = [0, 0, 0];
            bool geometry = false;
            if (i >= 0 && i == j)
                findings.Add(Error(FindingCode.SameNodeAtBothEnds, $"{path}.end_node", id, $"beam '{id}' starts and ends at node '{beam.StartNode}'"));
            else if (i >= 0 && j >= 0)
            {
                var a = model.Nodes[i];
                var c = model.Nodes[j];
                axis = [c.X - a.X, c.Y - a.Y, c.Z - a.Z];
                double len = Math.Sqrt(Sq(axis[0]) + Sq(axis[1]) + Sq(axis[2]));
                if (double.IsFinite(len) && len <= RelativeZeroLength * Math.Max(extent, double.Epsilon))
                    findings.Add(Error(FindingCode.ZeroLengthBar, path, id, $"beam '{id}' has zero length: nodes '{beam.StartNode}' and '{beam.EndNode}' coincide"));
                else if (double.IsFinite(len))
                {
                    geometry = true;
                    for (int k = 0; k < 3; k++) axis[k] /= len;
                }
            }

            Positive(beam.ElasticModulus, "elastic_modulus", "elastic modulus", FindingCode.NonPositiveStiffness);
            Positive(beam.ShearModulus, "shear_modulus", "shear modulus", FindingCode.NonPositiveStiffness);
            Positive(beam.Area, "area", "cross-section area", FindingCode.NonPositiveArea);
            Positive(beam.SecondMomentY, "second_moment_y", "second moment of area about local y", FindingCode.BeamPropertyOutOfRange);
            Positive(beam.SecondMomentZ, "second_moment_z", "second moment of area about local z", FindingCode.BeamPropertyOutOfRange);
            Positive(beam.TorsionConstant, "torsion_constant", "torsion constant", FindingCode.BeamPropertyOutOfRange);
            CheckOrientation(beam, path, id, geometry, axis, findings);
            CheckSubdivision(beam, path, id, nodes, startReleases, endReleases, findings);

            void Positive(double value, string field, string what, FindingCode code)
            {
                if (CheckNumber(value, $"{path}.{field}", id, what, findings) && value <= 0)
                    findings.Add(Error(code, $"{path}.{field}", id, $"beam '{id}' has {what} {value}; it must be positive"));
            }
        }
        return rotating;
    }

    private static void CheckOrientation(BeamDefinition beam, string path, string? id, bool geometry, double[] axis, List<ValidationFinding> findings)
    {
        var (vx, vy, vz) = beam.Orientation;
        string field = $"{path}.orientation";
        if (!(CheckNumber(vx, $"{field}.x", id, "orientation x", findings) & CheckNumber(vy, $"{field}.y", id, "orientation y", findings)
              & CheckNumber(vz, $"{field}.z", id, "orientation z", findings)))
            return;
        double norm = Math.Sqrt(Sq(vx) + Sq(vy) + Sq(vz));
        if (norm == 0)
        {
            findings.Add(Error(FindingCode.BeamPropertyOutOfRange, field, id, $"beam '{id}' has a zero orientation vector; give a vector that fixes local y (not along the member)"));
            return;
        }
        if (!geometry) return;
        // |v × x| / |v| is the sine of the angle between the orientation vector and the member axis.
        double cx = vy * axis[2] - vz * axis[1], cy = vz * axis[0] - vx * axis[2], cz = vx * axis[1] - vy * axis[0];
        if (Math.Sqrt(Sq(cx) + Sq(cy) + Sq(cz)) <= ParallelSine * norm)
            findings.Add(Error(FindingCode.BeamPropertyOutOfRange, field, id,
                $"beam '{id}' has an orientation vector ({vx:G4}, {vy:G4}, {vz:G4}) parallel to the member; it cannot fix local y"));
    }

    private static void CheckSubdivision(BeamDefinition beam, string path, string? id, Dictionary<string, int> nodes,
        BeamEndReleases startReleases, BeamEndReleases endReleases, List<ValidationFinding> findings)
    {
        if (beam.Subdivisions < 1 || beam.Subdivisions > MaxSubdivisions)
            findings.Add(Error(FindingCode.MemberSubdivisionOutOfRange, $"{path}.subdivisions", id,
                $"beam '{id}' has {beam.Subdivisions} subdivisions; give 1..{MaxSubdivisions}"));
        if (beam.BowPlane is not (BowPlane.LocalY or BowPlane.LocalZ))
            findings.Add(Error(FindingCode.UnknownOption, $"{path}.bow_plane", id, $"beam '{id}' has an unknown bow plane {(int)beam.BowPlane}"));
        if (CheckNumber(beam.BowAmplitude, $"{path}.bow_amplitude", id, "bow amplitude", findings) && beam.BowAmplitude != 0 && beam.Subdivisions < 2)
            findings.Add(Error(FindingCode.MemberSubdivisionOutOfRange, $"{path}.bow_amplitude", id,
                $"beam '{id}' has a bow amplitude but is not subdivided; give subdivisions ≥ 2 so the bow has nodes to bend"));
        if (beam.Subdivisions >= 2 && startReleases.Torsion && endReleases.Torsion)
            findings.Add(Error(FindingCode.MemberSubdivisionOutOfRange, $"{path}.subdivisions", id,
                $"beam '{id}' releases torsion at both ends and is subdivided; its intermediate nodes would twist freely"));
        if (id is null || beam.Subdivisions < 2 || beam.Subdivisions > MaxSubdivisions) return;
        for (int k = 1; k < beam.Subdivisions; k++)
        {
            string generated = IntermediateNodeId(id, k);
            if (nodes.ContainsKey(generated))
                findings.Add(Error(FindingCode.MemberSubdivisionOutOfRange, $"{path}.subdivisions", id,
                    $"beam '{id}' would generate intermediate node '{generated}', but a node with that id exists"));
        }
    }

    /// <summary>Id of the k-th intermediate node (k = 1..n−1) of a subdivided beam.</summary>
    public static string IntermediateNodeId(string beamId, int k) => $"{beamId}#{k}";
}
