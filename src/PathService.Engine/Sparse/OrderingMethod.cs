// OrderingMethod: which fill-reducing symmetric permutation LdlSymbolic.Analyze computes.

namespace PathService.Engine.Sparse;

/// <summary>Fill-reducing ordering applied before the symbolic and numeric factorisation.</summary>
public enum OrderingMethod
{
    /// <summary>Identity permutation: eliminate in the given order.</summary>
    Natural,

    /// <summary>Approximate minimum degree (Amestoy, Davis and Duff, 1996).</summary>
    ApproximateMinimumDegree,
}
