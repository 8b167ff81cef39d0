// OrderingMethod: which fill-reducing symmetric permutation LdlSymbolic.Analyze computes.

namespace PathService.Engine.Sparse;

/// <summary>Fill-reducing ordering applied before the symbolic and numeric factorisation.</summary>
public enum OrderingMethod
{
    /// <summary>Identity permutation: eliminate in the given order.</summary>
    Natural,

    /// <summary>Approximate minimum degree (Amestoy, Davis and Duff, 1996).</summary>
    ApproximateMinimumDegree,

    /// <summary>Nested dissection with separators from node coordinates (<see cref="GeometricNestedDissection"/>).</summary>
    NestedDissection,

    /// <summary>
    /// Whichever of minimum degree and the graph nested dissection (<see cref="GraphNestedDissection"/>) gives the
    /// cheaper factorisation (fewer flops), for models large enough for the difference to matter; minimum degree
    /// otherwise.
    /// </summary>
    Automatic,

    /// <summary>
    /// Nested dissection from the matrix graph alone: multilevel separators refined by Fiduccia-Mattheyses moves
    /// (<see cref="MultilevelNestedDissection"/>).
    /// </summary>
    GraphNestedDissection,
}
