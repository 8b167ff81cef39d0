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

    /// <summary>
    /// Cuts every quoted run longer than <see cref="MaxLength"/> in a message: the engine's messages quote the caller's
    /// ids ('…'), so a message about a 1,400-character id keeps its first 64 characters and says the rest was cut.
    /// </summary>
    public static string CutQuoted(string? s) => s is null ? "" : Quoted.Replace(s, m => "'" + m.Groups[1].Value[..MaxLength] + "…'");

    private static readonly System.Text.RegularExpressions.Regex Quoted = new("'([^']{65,})'", System.Text.RegularExpressions.RegexOptions.Compiled);
}
