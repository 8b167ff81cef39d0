using PathService.Client.Building;

namespace PathService.Client.Tests;

public class SegmentMesherTests
{
    [Fact]
    public void End_points_within_the_tolerance_become_one_node_and_the_node_keeps_the_first_point()
    {
        // Two segments drawn by hand meeting at (1, 0, 0) with a 3e-4 gap, and a third 2e-3 away (beyond the tolerance).
        var segments = new[]
        {
            new LineSegment(0, 0, 0, 1, 0, 0),
            new LineSegment(1.0003, 0, 0, 2, 0, 0),
            new LineSegment(1.002, 0, 0, 1, 1, 0),
        };
        var mesh = new SegmentMesher(1e-3).Mesh(segments, 2.1e8, 1e-3);
        Assert.Equal(5, mesh.Nodes.Count);
        Assert.Equal(mesh.Bars[0].EndNode, mesh.Bars[1].StartNode);
        Assert.NotEqual(mesh.Bars[0].EndNode, mesh.Bars[2].StartNode);
        var shared = mesh.Nodes.Single(n => n.Id == mesh.Bars[1].StartNode);
        Assert.Equal(1.0, shared.X); // the first point, not an average: no drift along chains of near points
        Assert.Empty(mesh.Issues);
        Assert.Equal([0, 1, 2], mesh.BarOfSegment);
    }

    [Fact]
    public void Duplicate_and_reversed_segments_are_reported_and_make_no_second_bar()
    {
        var segments = new[]
        {
            new LineSegment(0, 0, 0, 3, 0, 0, "chord"),
            new LineSegment(3, 0, 0, 0, 0, 0.0001, "chord-again"),
        };
        var mesh = new SegmentMesher(0.01).Mesh(segments, 2.1e8, 1e-3);
        Assert.Single(mesh.Bars);
        Assert.Equal("chord", mesh.Bars[0].Id);
        var issue = Assert.Single(mesh.Issues);
        Assert.Equal(SegmentIssueKind.Duplicate, issue.Kind);
        Assert.Equal(1, issue.Segment);
        Assert.Contains("like segment 0", issue.Message);
        Assert.Equal(-1, mesh.BarOfSegment[1]);
    }

    [Fact]
    public void A_segment_shorter_than_the_tolerance_is_reported_as_zero_length()
    {
        var mesh = new SegmentMesher(0.01).Mesh([new LineSegment(5, 5, 5, 5.004, 5, 5.004)], 2.1e8, 1e-3);
        Assert.Empty(mesh.Bars);
        var issue = Assert.Single(mesh.Issues);
        Assert.Equal(SegmentIssueKind.ZeroLength, issue.Kind);
        Assert.Single(mesh.Nodes);
    }

    [Fact]
    public void A_point_near_two_nodes_joins_the_first_and_the_ambiguity_is_reported()
    {
        var segments = new[]
        {
            new LineSegment(0, 0, 0, 0, 0, 5),
            new LineSegment(0.015, 0, 0, 0.015, 0, 5),
            new LineSegment(0.0075, 0, 0, 4, 0, 0), // 0.0075 from both bottom nodes, tolerance 0.01
        };
        var mesh = new SegmentMesher(0.01).Mesh(segments, 2.1e8, 1e-3);
        var issue = Assert.Single(mesh.Issues);
        Assert.Equal(SegmentIssueKind.AmbiguousMerge, issue.Kind);
        Assert.Equal(mesh.Bars[0].StartNode, mesh.Bars[2].StartNode);
    }

    [Theory]
    [InlineData(0.0)]
    [InlineData(-1.0)]
    [InlineData(double.NaN)]
    [InlineData(double.PositiveInfinity)]
    public void A_tolerance_that_is_not_positive_and_finite_is_refused(double tolerance) =>
        Assert.Throws<ArgumentOutOfRangeException>(() => new SegmentMesher(tolerance));

    [Fact]
    public void A_non_finite_coordinate_is_refused_naming_the_segment()
    {
        var ex = Assert.Throws<ArgumentException>(() => new SegmentMesher(0.01).Mesh([new LineSegment(0, 0, 0, 1, 0, 0), new LineSegment(0, double.NaN, 0, 1, 0, 0)], 1, 1));
        Assert.Contains("segment 1", ex.Message);
    }

    /// <summary>
    /// Property check against brute force: a jittered lattice of segments (each end moved by less than a quarter of the
    /// tolerance, lattice spacing far above it). Every pair of end points closer than the tolerance must share a node,
    /// every pair farther than twice the jitter bound must not, and the node count equals the lattice point count.
    /// </summary>
    [Fact]
    public void Merging_agrees_with_a_brute_force_comparison_on_a_jittered_lattice()
    {
        const double tol = 1e-3, spacing = 0.5;
        var rng = new Random(20261202);
        double J() => (rng.NextDouble() - 0.5) * 0.5 * tol / Math.Sqrt(3); // |jitter| < tol/4 per point
        var segments = new List<LineSegment>();
        var latticeOf = new List<((int, int, int) A, (int, int, int) B)>();
        int m = 6;
        for (int i = 0; i < m; i++)
        for (int j = 0; j < m; j++)
        for (int k = 0; k < 3; k++)
        {
            if (i + 1 < m) { segments.Add(new(i * spacing + J(), j * spacing + J(), k * spacing + J(), (i + 1) * spacing + J(), j * spacing + J(), k * spacing + J())); latticeOf.Add(((i, j, k), (i + 1, j, k))); }
            if (j + 1 < m) { segments.Add(new(i * spacing + J(), j * spacing + J(), k * spacing + J(), i * spacing + J(), (j + 1) * spacing + J(), k * spacing + J())); latticeOf.Add(((i, j, k), (i, j + 1, k))); }
            if (k + 1 < 3) { segments.Add(new(i * spacing + J(), j * spacing + J(), k * spacing + J(), i * spacing + J(), j * spacing + J(), (k + 1) * spacing + J())); latticeOf.Add(((i, j, k), (i, j, k + 1))); }
        }
        var mesh = new SegmentMesher(tol).Mesh(segments, 2.1e8, 1e-3);
        Assert.Equal(m * m * 3, mesh.Nodes.Count);
        Assert.Equal(segments.Count, mesh.Bars.Count);
        Assert.Empty(mesh.Issues);
        // Same lattice point <=> same node.
        var nodeOfLattice = new Dictionary<(int, int, int), string>();
        for (int s = 0; s < segments.Count; s++)
        {
            var bar = mesh.Bars[mesh.BarOfSegment[s]];
            foreach (var (p, id) in new[] { (latticeOf[s].A, bar.StartNode), (latticeOf[s].B, bar.EndNode) })
            {
                if (nodeOfLattice.TryGetValue(p, out var known)) Assert.Equal(known, id);
                else nodeOfLattice[p] = id;
            }
        }
        Assert.Equal(mesh.Nodes.Count, nodeOfLattice.Values.Distinct().Count());
    }

    [Fact]
    public void The_same_input_gives_the_same_ids()
    {
        var segments = Enumerable.Range(0, 50).Select(i => new LineSegment(i, 0, 0, i + 1, 0.5 * (i % 3), 0)).ToArray();
        var a = new SegmentMesher(1e-6).Mesh(segments, 1, 1);
        var b = new SegmentMesher(1e-6).Mesh(segments, 1, 1);
        Assert.Equal(a.Nodes, b.Nodes);
        Assert.Equal(a.Bars, b.Bars);
    }
}
