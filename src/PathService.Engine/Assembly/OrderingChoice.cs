using System.Diagnostics;
using PathService.Engine.Model;
using PathService.Engine.Sparse;

namespace PathService.Engine.Assembly;

/// <summary>
/// Symbolic analysis of a model's tangent pattern with the requested ordering. Coordinate nested dissection needs the
/// node of each free equation and the node coordinates, which only the model knows; <see cref="OrderingMethod.Automatic"/>
/// computes both minimum degree and the graph nested dissection on larger models and keeps the one with fewer flops
/// (the symbolic phase is a small fraction of one trace; the flop count decides every factorisation that follows).
/// </summary>
public static class OrderingChoice
{
    /// <summary>
    /// Free equations from which Automatic also tries the graph nested dissection
    /// (<see cref="OrderingMethod.GraphNestedDissection"/>). On the bench roofs it needs fewer flops from m = 40
    /// (8,895 equations: 1.16e8 against 1.26e8) on, and far fewer from m = 60 (20,535: 4.3e8 against 5.6e8; m = 120:
    /// 3.6e9 against 6.7e9); its ordering takes 0.2–0.3 s at m = 60 against about 0.05 s for minimum degree, which a
    /// trace of a hundred factorisations earns back only from about 20,000 equations, so smaller models keep minimum
    /// degree without trying.
    /// </summary>
    public const int AutomaticThreshold = 20_000;

    public static LdlSymbolic Analyze(StructuralModel model, SymmetricPattern pattern, OrderingMethod method)
    {
        ArgumentNullException.ThrowIfNull(model);
        ArgumentNullException.ThrowIfNull(pattern);
        switch (method)
        {
            case OrderingMethod.NestedDissection:
                return NestedDissection(model, pattern);
            case OrderingMethod.Automatic:
                var amd = LdlSymbolic.Analyze(pattern, OrderingMethod.ApproximateMinimumDegree);
                if (pattern.Size < AutomaticThreshold) return amd;
                var nd = LdlSymbolic.Analyze(pattern, OrderingMethod.GraphNestedDissection);
                return nd.FactorFlopCount < amd.FactorFlopCount ? nd : amd;
            default:
                return LdlSymbolic.Analyze(pattern, method);
        }
    }

    private static LdlSymbolic NestedDissection(StructuralModel model, SymmetricPattern pattern)
    {
        var clock = Stopwatch.StartNew();
        var fullOf = model.Dofs.FullOf;
        var nodeOf = new int[pattern.Size];
        for (int e = 0; e < nodeOf.Length; e++) nodeOf[e] = model.Dofs.NodeOf[fullOf[e]];
        var perm = GeometricNestedDissection.Order(pattern, nodeOf, model.Coordinates);
        return LdlSymbolic.FromPermutation(pattern, perm, OrderingMethod.NestedDissection, clock.Elapsed);
    }
}
