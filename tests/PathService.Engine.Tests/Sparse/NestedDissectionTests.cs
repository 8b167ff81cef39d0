using PathService.Bench.Models;
using PathService.Engine.Assembly;
using PathService.Engine.Model;
using PathService.Engine.Sparse;

namespace PathService.Engine.Tests.Sparse;

/// <summary>
/// The geometric nested-dissection ordering: a valid permutation that keeps each node's unknowns together, a true
/// separator at the top of the dissection, and a factorisation on it that solves real tangents (checked against the
/// reference factorisation on minimum degree, as the supernodal tests do).
/// </summary>
public class NestedDissectionTests
{
    [Fact]
    public void Ordering_is_a_permutation_keeping_node_unknowns_together()
    {
        var model = StructuralModel.Create(SpaceTrussRoof.Create(30));
        var asm = new StructureAssembler(model);
        var symbolic = OrderingChoice.Analyze(model, asm.Pattern, OrderingMethod.NestedDissection);
        Assert.Equal(OrderingMethod.NestedDissection, symbolic.Ordering);
        var perm = symbolic.Permutation;
        Assert.Equal(Enumerable.Range(0, asm.Pattern.Size), perm.Order());
        // Unknowns of one node appear consecutively.
        var nodeOf = perm.Select(e => model.Dofs.FullOf[e] / 3).ToArray();
        int changes = 0;
        for (int k = 1; k < nodeOf.Length; k++) if (nodeOf[k] != nodeOf[k - 1]) changes++;
        Assert.Equal(nodeOf.Distinct().Count() - 1, changes);
    }

    [Fact]
    public void Last_block_of_the_ordering_separates_the_roof()
    {
        // At the top of the dissection the roof is cut in two; the nodes ordered last (the separator, before the
        // parts' own separators) must disconnect what comes before them into at least two pieces.
        var model = StructuralModel.Create(SpaceTrussRoof.Create(30));
        var asm = new StructureAssembler(model);
        var perm = OrderingChoice.Analyze(model, asm.Pattern, OrderingMethod.NestedDissection).Permutation;
        var symbolic = LdlSymbolic.FromPermutation(asm.Pattern, perm, OrderingMethod.NestedDissection, TimeSpan.Zero);
        // In the elimination tree, the root's chain of single-child ancestors is the top separator; below it the tree
        // must branch (two or more children), which is what a separator does.
        var parent = symbolic.Parent;
        int n = parent.Length;
        var children = new int[n];
        foreach (int p in parent) if (p >= 0) children[p]++;
        int k = n - 1, chain = 0;
        while (k >= 0 && children[k] == 1) { k = Array.LastIndexOf(parent, k); chain++; }
        Assert.True(k >= 0 && children[k] >= 2, "the top of the elimination tree should branch below the top separator");
        // A straight cut across a 30 x 30 double-layer roof: about two node lines, 3 unknowns each, far below n.
        Assert.InRange(chain, 3, 12 * 30);
    }

    [Fact]
    public void Factorisation_on_nested_dissection_solves_real_tangents_including_an_indefinite_one()
    {
        var (worst, negative) = RoofTangentSolves.Check(OrderingMethod.NestedDissection);
        Assert.True(worst < 1e-10, $"relative residual {worst:E2}");
        Assert.True(negative > 0, "the last tangent should be indefinite");
    }

    [Fact]
    public void Automatic_keeps_minimum_degree_below_the_threshold_and_bad_permutations_are_refused()
    {
        var model = StructuralModel.Create(SpaceTrussRoof.Create(10));
        var asm = new StructureAssembler(model);
        Assert.Equal(OrderingMethod.ApproximateMinimumDegree, OrderingChoice.Analyze(model, asm.Pattern, OrderingMethod.Automatic).Ordering);
        int n = asm.Pattern.Size;
        var repeated = Enumerable.Range(0, n).Select(i => i == 1 ? 0 : i).ToArray();
        var ex = Assert.Throws<ArgumentException>(() => LdlSymbolic.FromPermutation(asm.Pattern, repeated, OrderingMethod.NestedDissection, TimeSpan.Zero));
        Assert.Contains("repeated", ex.Message);
        Assert.Throws<ArgumentException>(() => LdlSymbolic.FromPermutation(asm.Pattern, new int[n - 1], OrderingMethod.NestedDissection, TimeSpan.Zero));
        Assert.Throws<ArgumentException>(() => LdlSymbolic.Analyze(asm.Pattern, OrderingMethod.NestedDissection));
    }

    [Fact]
    public void Inconsistent_node_data_is_refused_with_the_field_named()
    {
        var pattern = SymmetricPattern.FromEntries(3, [(0, 0), (0, 1), (1, 1), (2, 2)]);
        var xyz = new double[] { 0, 0, 0, 1, 0, 0 };
        var shortMap = Assert.Throws<ArgumentException>(() => GeometricNestedDissection.Order(pattern, [0, 1], xyz));
        Assert.Equal("nodeOf", shortMap.ParamName);
        Assert.Contains("3 entries", shortMap.Message);
        var outside = Assert.Throws<ArgumentException>(() => GeometricNestedDissection.Order(pattern, [0, 1, 2], xyz));
        Assert.Contains("node index 2 outside the 2 nodes", outside.Message);
        Assert.Equal(new[] { 0, 1, 2 }, GeometricNestedDissection.Order(pattern, [0, 0, 1], xyz).Order());
    }
}
