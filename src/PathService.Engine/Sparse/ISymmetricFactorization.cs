// ISymmetricFactorization: the numeric LDL^T factorisation as the engine uses
// it, implemented by the scalar reference (through ScalarLdlAdapter) and by the
// supernodal factorisation.

namespace PathService.Engine.Sparse;

/// <summary>
/// A numeric LDLᵀ factorisation without numerical pivoting on a structure fixed by an <see cref="LdlSymbolic"/>:
/// refactorise new values, read the inertia and the tiny-pivot diagnosis, solve with one or two right-hand sides.
/// </summary>
public interface ISymmetricFactorization
{
    /// <summary>The symbolic analysis (ordering) this factorisation was built on.</summary>
    LdlSymbolic Symbolic { get; }

    /// <summary>Outcome of the last Factorize (ZeroPivot before the first call).</summary>
    LdlStatus Status { get; }

    /// <summary>Number of negative pivots: the number of negative eigenvalues of A (Sylvester's law of inertia).</summary>
    int NegativePivotCount { get; }

    /// <summary>Original (unpermuted) index of the first tiny or zero pivot in the symbolic elimination order, -1 if none.</summary>
    int TinyPivotIndex { get; }

    /// <summary>min over k of |d_k| / scale_k.</summary>
    double SmallestPivotRatio { get; }

    /// <summary>
    /// Factorises values aligned with Symbolic.Pattern. A pivot with |d_k| &lt;= singularPivotRatio * scale_k
    /// (scale_k = |A_kk|, or max_i |A_ii| if A_kk = 0) gives TinyPivot (usable); zero or non-finite gives ZeroPivot.
    /// </summary>
    LdlStatus Factorize(ReadOnlySpan<double> values, double singularPivotRatio = 1e-11);

    /// <summary>Overwrites b with A⁻¹b (original ordering).</summary>
    void Solve(Span<double> rhsInPlace);

    /// <summary>Writes x = A⁻¹b; b is not modified unless it overlaps x.</summary>
    void Solve(ReadOnlySpan<double> b, Span<double> x);

    /// <summary>Overwrites two right-hand sides with their solutions in one pass over the factor.</summary>
    void Solve2(Span<double> rhs1InPlace, Span<double> rhs2InPlace);
}

/// <summary>The scalar up-looking <see cref="LdlFactorization"/> behind the common interface (the reference).</summary>
public sealed class ScalarLdlAdapter(LdlFactorization inner) : ISymmetricFactorization
{
    public ScalarLdlAdapter(LdlSymbolic symbolic) : this(new LdlFactorization(symbolic)) { }

    public LdlFactorization Inner { get; } = inner ?? throw new ArgumentNullException(nameof(inner));
    public LdlSymbolic Symbolic => Inner.Symbolic;
    public LdlStatus Status => Inner.Status;
    public int NegativePivotCount => Inner.NegativePivotCount;
    public int TinyPivotIndex => Inner.TinyPivotIndex;
    public double SmallestPivotRatio => Inner.SmallestPivotRatio;
    public LdlStatus Factorize(ReadOnlySpan<double> values, double singularPivotRatio = 1e-11) => Inner.Factorize(values, singularPivotRatio);
    public void Solve(Span<double> rhsInPlace) => Inner.Solve(rhsInPlace);
    public void Solve(ReadOnlySpan<double> b, Span<double> x) => Inner.Solve(b, x);
    public void Solve2(Span<double> rhs1InPlace, Span<double> rhs2InPlace)
    {
        Inner.Solve(rhs1InPlace);
        Inner.Solve(rhs2InPlace);
    }
}
