using PathService.Contracts.V1;

namespace PathService.Client.Building;

/// <summary>A straight line between two points, as a geometry tool draws a member; <see cref="Tag"/> is the caller's own label.</summary>
public readonly record struct LineSegment(double X1, double Y1, double Z1, double X2, double Y2, double Z2, string? Tag = null);

/// <summary>What happened to one input segment that did not become a bar of its own.</summary>
public enum SegmentIssueKind
{
    /// <summary>Both ends merged into the same node (shorter than the tolerance): no bar.</summary>
    ZeroLength,
    /// <summary>Joins the same two nodes as an earlier segment: no second bar.</summary>
    Duplicate,
    /// <summary>An end lies within the tolerance of more than one node: it joined the first, the others are listed.</summary>
    AmbiguousMerge,
}

/// <summary>One issue with an input segment; <see cref="Segment"/> is its 0-based index in the input.</summary>
public sealed record SegmentIssue(int Segment, SegmentIssueKind Kind, string Message);

/// <summary>The nodes and bars made from a set of segments, the bar that each segment became (or −1), and the issues.</summary>
public sealed record SegmentMesh(IReadOnlyList<Node> Nodes, IReadOnlyList<Bar> Bars, IReadOnlyList<int> BarOfSegment, IReadOnlyList<SegmentIssue> Issues);

/// <summary>
/// Turns line segments from a geometry tool into nodes and bars: end points closer than a tolerance become one node.
/// Points are looked up in a uniform grid of cells as wide as the tolerance, so only the 27 cells around a point are
/// searched and the work is linear in the number of segments. A point joins the first node (in creation order)
/// within the tolerance; the node keeps the coordinates of the point that created it, so merging does not drift
/// along a chain of nearly coincident points. Deterministic: the same input gives the same ids.
/// </summary>
public sealed class SegmentMesher
{
    private readonly double _tolerance;
    private readonly Dictionary<(long, long, long), List<int>> _cells = new();
    private readonly List<Node> _nodes = new();

    /// <param name="tolerance">Merge distance (length unit of the model); positive and finite.</param>
    /// <param name="nodePrefix">Prefix of the generated node ids ("n" gives n1, n2, ...).</param>
    /// <param name="barPrefix">Prefix of the generated bar ids for segments without a tag.</param>
    public SegmentMesher(double tolerance, string nodePrefix = "n", string barPrefix = "b")
    {
        if (!(tolerance > 0) || double.IsInfinity(tolerance))
            throw new ArgumentOutOfRangeException(nameof(tolerance), tolerance, "the merge tolerance must be positive and finite");
        _tolerance = tolerance;
        NodePrefix = nodePrefix;
        BarPrefix = barPrefix;
    }

    public string NodePrefix { get; }
    public string BarPrefix { get; }

    /// <summary>
    /// Builds the mesh. Every bar gets <paramref name="elasticModulus"/> and <paramref name="area"/>; a segment's tag
    /// becomes its bar id when given (tags must then be unique), otherwise the id is the prefix and the segment's
    /// 1-based position.
    /// </summary>
    public SegmentMesh Mesh(IReadOnlyList<LineSegment> segments, double elasticModulus, double area)
    {
        ArgumentNullException.ThrowIfNull(segments);
        _cells.Clear();
        _nodes.Clear();
        var bars = new List<Bar>();
        var barOf = new int[segments.Count];
        var issues = new List<SegmentIssue>();
        var pairs = new Dictionary<(int, int), int>();
        var ids = new HashSet<string>(StringComparer.Ordinal);
        for (int i = 0; i < segments.Count; i++)
        {
            var s = segments[i];
            if (!AllFinite(s))
                throw new ArgumentException($"segment {i} has a coordinate that is not a finite number", nameof(segments));
            int a = NodeAt(s.X1, s.Y1, s.Z1, i, issues);
            int b = NodeAt(s.X2, s.Y2, s.Z2, i, issues);
            barOf[i] = -1;
            if (a == b)
            {
                issues.Add(new SegmentIssue(i, SegmentIssueKind.ZeroLength, $"segment {i} is shorter than the merge tolerance {_tolerance:G6}: both ends are node {_nodes[a].Id}; no bar made"));
                continue;
            }
            var key = a < b ? (a, b) : (b, a);
            if (pairs.TryGetValue(key, out int first))
            {
                issues.Add(new SegmentIssue(i, SegmentIssueKind.Duplicate, $"segment {i} joins nodes {_nodes[key.Item1].Id} and {_nodes[key.Item2].Id} like segment {first}; no second bar made"));
                continue;
            }
            pairs[key] = i;
            string id = string.IsNullOrEmpty(s.Tag) ? $"{BarPrefix}{i + 1}" : s.Tag!;
            if (!ids.Add(id))
                throw new ArgumentException($"segment {i}: bar id '{id}' is used twice (tags must be unique)", nameof(segments));
            barOf[i] = bars.Count;
            bars.Add(new Bar { Id = id, StartNode = _nodes[a].Id, EndNode = _nodes[b].Id, ElasticModulus = elasticModulus, Area = area });
        }
        return new SegmentMesh(_nodes.ToArray(), bars, barOf, issues);
    }

    private int NodeAt(double x, double y, double z, int segment, List<SegmentIssue> issues)
    {
        var (cx, cy, cz) = Cell(x, y, z);
        int found = -1;
        List<int>? others = null;
        double t2 = _tolerance * _tolerance;
        for (long i = cx - 1; i <= cx + 1; i++)
        for (long j = cy - 1; j <= cy + 1; j++)
        for (long k = cz - 1; k <= cz + 1; k++)
        {
            if (!_cells.TryGetValue((i, j, k), out var list)) continue;
            foreach (int n in list)
            {
                var p = _nodes[n];
                double dx = p.X - x, dy = p.Y - y, dz = p.Z - z;
                if (dx * dx + dy * dy + dz * dz > t2) continue;
                if (found < 0 || n < found)
                {
                    if (found >= 0) (others ??= new()).Add(found);
                    found = n;
                }
                else (others ??= new()).Add(n);
            }
        }
        if (others is not null)
            issues.Add(new SegmentIssue(segment, SegmentIssueKind.AmbiguousMerge,
                $"segment {segment}: the point ({x:G6}, {y:G6}, {z:G6}) is within {_tolerance:G6} of nodes {_nodes[found].Id} and {string.Join(", ", others.Select(o => _nodes[o].Id))}; joined {_nodes[found].Id}"));
        if (found >= 0) return found;
        _nodes.Add(new Node { Id = $"{NodePrefix}{_nodes.Count + 1}", X = x, Y = y, Z = z });
        var key = (cx, cy, cz);
        if (!_cells.TryGetValue(key, out var cell)) _cells[key] = cell = new List<int>(1);
        cell.Add(_nodes.Count - 1);
        return _nodes.Count - 1;
    }

    private (long, long, long) Cell(double x, double y, double z) => (Index(x), Index(y), Index(z));

    private long Index(double v)
    {
        double c = Math.Floor(v / _tolerance);
        // Beyond 2^53 cells the grid cannot tell neighbours apart; such a tolerance is meaningless for the coordinates.
        if (Math.Abs(c) > 9.0e15)
            throw new ArgumentException($"the merge tolerance {_tolerance:G6} is too small for a coordinate of {v:G6}");
        return (long)c;
    }

    private static bool AllFinite(LineSegment s) =>
        double.IsFinite(s.X1) && double.IsFinite(s.Y1) && double.IsFinite(s.Z1) && double.IsFinite(s.X2) && double.IsFinite(s.Y2) && double.IsFinite(s.Z2);
}
