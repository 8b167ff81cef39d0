namespace PathService.Cli;

/// <summary>Process exit codes a pipeline can act on (documented in docs/cli.md).</summary>
internal static class ExitCodes
{
    /// <summary>The analysis ran and ended by one of its own stopping rules.</summary>
    public const int Success = 0;
    /// <summary>Bad command line.</summary>
    public const int Usage = 1;
    /// <summary>The model or request is invalid (unreadable file, validation errors, a mechanism).</summary>
    public const int InvalidInput = 2;
    /// <summary>The analysis ran but did not reach its target (diverged, wall time, cancelled, initial state failed).</summary>
    public const int TargetNotReached = 3;
    /// <summary>The server could not be reached or failed (after the retries), or its TLS certificate is not trusted.</summary>
    public const int ServerUnavailable = 4;
    /// <summary>In batch mode: at least one model failed (see the summary table).</summary>
    public const int SomeFailed = 5;
    /// <summary>The server refused the caller: no API key, or a key it does not accept.</summary>
    public const int AuthenticationFailed = 6;
    /// <summary>The server refused the request under its limits (busy, queue full, model or memory above its caps).</summary>
    public const int RefusedByLimits = 7;
    /// <summary>A trace restarted on another instance differed from the points already received.</summary>
    public const int ReplayMismatch = 8;
}
