namespace PathService.Server;

/// <summary>
/// Caller-supplied text (ids, names, method paths, exception messages that quote them) goes into logs and error details
/// only cut to a fixed length, so a request with a 1,400-character id cannot flood the log or the trailers.
/// </summary>
public static class LogText
{
    /// <summary>Longest caller-supplied string written whole.</summary>
    public const int MaxLength = 64;

    /// <summary>The text, or its first <paramref name="max"/> characters and an ellipsis.</summary>
    public static string Cut(string? s, int max = MaxLength) => s is null ? "" : s.Length <= max ? s : s[..max] + "…";
}
