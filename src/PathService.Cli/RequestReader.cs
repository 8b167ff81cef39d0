using System.Text.Json;
using Google.Protobuf;
using PathService.Contracts.V1;

namespace PathService.Cli;

/// <summary>
/// Reads a <see cref="TracePathRequest"/> from a file: the Protobuf JSON mapping (.json) or binary Protobuf (.pb,
/// .bin). Errors name the file and, for JSON, the line and column or the offending field.
/// </summary>
internal static class RequestReader
{
    public static TracePathRequest Read(string path)
    {
        if (!File.Exists(path)) throw new InputException($"{path}: file not found");
        if (path.EndsWith(".pb", StringComparison.OrdinalIgnoreCase) || path.EndsWith(".bin", StringComparison.OrdinalIgnoreCase))
        {
            try { return TracePathRequest.Parser.ParseFrom(File.ReadAllBytes(path)); }
            catch (InvalidProtocolBufferException ex) { throw new InputException($"{path}: not a binary TracePathRequest: {ex.Message}"); }
        }
        string text = File.ReadAllText(path);
        return Parse(text, path);
    }

    public static TracePathRequest Parse(string text, string source)
    {
        try
        {
            using var _ = JsonDocument.Parse(text, new JsonDocumentOptions { AllowTrailingCommas = false, CommentHandling = JsonCommentHandling.Disallow });
        }
        catch (JsonException ex)
        {
            throw new InputException($"{source}:{(ex.LineNumber ?? 0) + 1}:{(ex.BytePositionInLine ?? 0) + 1}: invalid JSON: {FirstSentence(ex.Message)}");
        }
        try
        {
            return new JsonParser(JsonParser.Settings.Default.WithIgnoreUnknownFields(false)).Parse<TracePathRequest>(text);
        }
        catch (InvalidProtocolBufferException ex)
        {
            throw new InputException($"{source}{LineOf(text, ex.Message)}: {ex.Message}");
        }
        catch (InvalidJsonException ex)
        {
            throw new InputException($"{source}: {ex.Message}");
        }
    }

    /// <summary>Finds the line of the first quoted name mentioned in a parser message, so that the user can jump to it.</summary>
    private static string LineOf(string text, string message)
    {
        int q1 = message.IndexOf('"'), q2 = q1 >= 0 ? message.IndexOf('"', q1 + 1) : -1;
        string? name = q1 >= 0 && q2 > q1 ? message[(q1 + 1)..q2] : null;
        if (name is null)
        {
            var m = System.Text.RegularExpressions.Regex.Match(message, @"field:? '?([A-Za-z_][A-Za-z0-9_]*)'?");
            name = m.Success ? m.Groups[1].Value : null;
        }
        if (name is null) return "";
        int at = text.IndexOf($"\"{name}\"", StringComparison.Ordinal);
        if (at < 0) return "";
        int line = 1;
        for (int i = 0; i < at; i++) if (text[i] == '\n') line++;
        return $":{line}";
    }

    private static string FirstSentence(string s) { int i = s.IndexOf(". ", StringComparison.Ordinal); return i > 0 ? s[..(i + 1)] : s; }
}

/// <summary>Unreadable or malformed input; exit code 2.</summary>
internal sealed class InputException(string message) : Exception(message);
