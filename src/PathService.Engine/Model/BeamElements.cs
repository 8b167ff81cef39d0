namespace PathService.Engine.Model;

/// <summary>
/// The beam elements of a model in array form, after subdivision: member k of the definition becomes n elements between
/// its start node, n − 1 generated intermediate nodes "&lt;beam id&gt;#1".."#(n−1)" and its end node. The member's releases
/// go to its first element's start and last element's end; intermediate joints are rigid. A bow imperfection moves the
/// intermediate nodes by a·sin(π s) (s = k/n along the member) towards the member's local y or z.
/// Local axes of each element: x along its own initial chord, y = normalised component of the member's orientation
/// vector normal to x, z = x × y (set up by the kernel, <see cref="Elements.CorotationalBeam.TryInitialTriad"/>).
/// </summary>
public sealed class BeamElements
{
    /// <summary>Release flags of an element end: bit 0 torsion, bit 1 bending about local y, bit 2 bending about local z.</summary>
    public const int ReleaseTorsion = 1, ReleaseBendingY = 2, ReleaseBendingZ = 4, ReleaseAll = 7;

    public int Count { get; }
    /// <summary>Element ids: the beam id when undivided, else "&lt;beam id&gt;/k" for k = 1..n.</summary>
    public string[] Ids { get; }
    /// <summary>Index of the defining beam (into <see cref="ModelDefinition.Beams"/>) of each element.</summary>
    public int[] Member { get; }
    public int[] Start { get; }
    public int[] End { get; }
    public double[] ElasticModulus { get; }
    public double[] ShearModulus { get; }
    public double[] Area { get; }
    public double[] SecondMomentY { get; }
    public double[] SecondMomentZ { get; }
    public double[] TorsionConstant { get; }
    public double[] Length { get; }
    public int[] StartReleases { get; }
    public int[] EndReleases { get; }

    internal BeamElements(ModelDefinition def, Dictionary<string, int> nodeIndex, List<string> nodeIds, List<double> coordinates)
    {
        var ids = new List<string>(); var member = new List<int>(); var start = new List<int>(); var end = new List<int>();
        var startRel = new List<int>(); var endRel = new List<int>();
        for (int b = 0; b < def.Beams.Count; b++)
        {
            var beam = def.Beams[b];
            int i = nodeIndex[beam.StartNode], j = nodeIndex[beam.EndNode];
            int n = Math.Max(1, beam.Subdivisions);
            double[] a = [coordinates[3 * i], coordinates[3 * i + 1], coordinates[3 * i + 2]];
            double[] c = [coordinates[3 * j], coordinates[3 * j + 1], coordinates[3 * j + 2]];
            Span<double> triad = stackalloc double[9];
            Axes(c[0] - a[0], c[1] - a[1], c[2] - a[2], beam.Orientation, triad);
            int bowRow = beam.BowPlane == BowPlane.LocalZ ? 6 : 3;
            int previous = i;
            for (int k = 1; k <= n; k++)
            {
                int next = j;
                if (k < n)
                {
                    // Intermediate node on the chord, moved by the half-sine bow.
                    double s = (double)k / n, bow = beam.BowAmplitude * Math.Sin(Math.PI * s);
                    next = nodeIds.Count;
                    nodeIds.Add(BeamChecks.IntermediateNodeId(beam.Id, k));
                    for (int q = 0; q < 3; q++) coordinates.Add(a[q] + s * (c[q] - a[q]) + bow * triad[bowRow + q]);
                    nodeIndex[nodeIds[^1]] = next;
                }
                ids.Add(n == 1 ? beam.Id : $"{beam.Id}/{k}");
                member.Add(b); start.Add(previous); end.Add(next);
                startRel.Add(k == 1 ? Flags(beam.StartReleases) : 0);
                endRel.Add(k == n ? Flags(beam.EndReleases) : 0);
                previous = next;
            }
        }
        Count = ids.Count;
        Ids = ids.ToArray(); Member = member.ToArray(); Start = start.ToArray(); End = end.ToArray();
        StartReleases = startRel.ToArray(); EndReleases = endRel.ToArray();
        ElasticModulus = Member.Select(b => def.Beams[b].ElasticModulus).ToArray();
        ShearModulus = Member.Select(b => def.Beams[b].ShearModulus).ToArray();
        Area = Member.Select(b => def.Beams[b].Area).ToArray();
        SecondMomentY = Member.Select(b => def.Beams[b].SecondMomentY).ToArray();
        SecondMomentZ = Member.Select(b => def.Beams[b].SecondMomentZ).ToArray();
        TorsionConstant = Member.Select(b => def.Beams[b].TorsionConstant).ToArray();
        Length = new double[Count];
        for (int e = 0; e < Count; e++)
        {
            int i = Start[e], j = End[e];
            double dx = coordinates[3 * j] - coordinates[3 * i], dy = coordinates[3 * j + 1] - coordinates[3 * i + 1], dz = coordinates[3 * j + 2] - coordinates[3 * i + 2];
            Length[e] = Math.Sqrt(dx * dx + dy * dy + dz * dz);
        }
    }

    /// <summary>Whether an element end holds at least one rotation (its node then carries rotations).</summary>
    public bool StartHoldsRotation(int e) => StartReleases[e] != ReleaseAll;
    public bool EndHoldsRotation(int e) => EndReleases[e] != ReleaseAll;

    private static int Flags(BeamEndReleases? r) => r is null ? 0
        : (r.Torsion ? ReleaseTorsion : 0) | (r.BendingY ? ReleaseBendingY : 0) | (r.BendingZ ? ReleaseBendingZ : 0);

    /// <summary>Member axes for the bow, rows e_x, e_y, e_z: e_x along the chord, e_y = unit(v − (v·e_x)e_x), e_z = e_x × e_y.</summary>
    public static void Axes(double dx, double dy, double dz, (double X, double Y, double Z) v, Span<double> t)
    {
        double l = Math.Sqrt(dx * dx + dy * dy + dz * dz);
        t[0] = dx / l; t[1] = dy / l; t[2] = dz / l;
        double p = v.X * t[0] + v.Y * t[1] + v.Z * t[2];
        double yx = v.X - p * t[0], yy = v.Y - p * t[1], yz = v.Z - p * t[2];
        double ly = Math.Sqrt(yx * yx + yy * yy + yz * yz);
        t[3] = yx / ly; t[4] = yy / ly; t[5] = yz / ly;
        t[6] = t[1] * t[5] - t[2] * t[4];
        t[7] = t[2] * t[3] - t[0] * t[5];
        t[8] = t[0] * t[4] - t[1] * t[3];
    }
}
