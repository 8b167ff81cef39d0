// LdlStatus: outcome of one numeric LDL^T factorisation (no numerical pivoting).

namespace PathService.Engine.Sparse;

/// <summary>Outcome of <see cref="LdlFactorization.Factorize"/>.</summary>
public enum LdlStatus
{
    /// <summary>Every pivot is nonzero and not tiny relative to its scale.</summary>
    Success,

    /// <summary>Factorisation completed but some |d_k| &lt;= ratio * scale_k: usable, ill-conditioned.</summary>
    TinyPivot,

    /// <summary>A pivot was exactly zero or not finite: factorisation stopped, factor unusable.</summary>
    ZeroPivot,
}
