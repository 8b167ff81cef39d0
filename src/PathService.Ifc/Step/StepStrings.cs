using System.Globalization;
using System.Text;

namespace PathService.Ifc.Step;

/// <summary>
/// Decoding and encoding of string literals: quotes doubled, "\\" for a backslash, and the control directives
/// \X\hh (one ISO 8859-1 character), \X2\hhhh…\X0\ (UTF-16 code units) and \X4\hhhhhhhh…\X0\ (UCS-4), \S\c (the
/// upper half of ISO 8859) and \P?\ (code page switch, ignored) of ISO 10303-21:2016 clause 6.4.3 (as cited in the
/// import issue).
/// </summary>
internal static class StepStrings
{
    /// <summary>Decodes the raw text between the quotes (with '' already turned into ').</summary>
    public static string Decode(string raw, int? entity, int? attribute, int line)
    {
        if (raw.IndexOf('\\') < 0) return raw;
        var sb = new StringBuilder(raw.Length);
        int i = 0;
        while (i < raw.Length)
        {
            char c = raw[i];
            if (c != '\\') { sb.Append(c); i++; continue; }
            string rest = raw[i..];
            if (rest.StartsWith("\\\\", StringComparison.Ordinal)) { sb.Append('\\'); i += 2; }
            else if (rest.StartsWith("\\X2\\", StringComparison.Ordinal)) i = Wide(raw, i + 4, 4, sb, entity, attribute, line);
            else if (rest.StartsWith("\\X4\\", StringComparison.Ordinal)) i = Wide(raw, i + 4, 8, sb, entity, attribute, line);
            else if (rest.StartsWith("\\X\\", StringComparison.Ordinal) && rest.Length >= 5 && IsHex(rest.AsSpan(3, 2)))
            {
                sb.Append((char)int.Parse(rest.AsSpan(3, 2), NumberStyles.HexNumber, CultureInfo.InvariantCulture));
                i += 5;
            }
            else if (rest.StartsWith("\\S\\", StringComparison.Ordinal) && rest.Length >= 4) { sb.Append((char)(rest[3] + 128)); i += 4; }
            else if (rest.StartsWith("\\P", StringComparison.Ordinal) && rest.Length >= 4 && rest[3] == '\\') i += 4;
            else throw new StepFormatException("BAD_STRING", $"unknown escape '{Head(rest)}' in a string (a backslash is written \\\\)", entity, attribute, line);
        }
        return sb.ToString();
    }

    private static int Wide(string raw, int i, int digits, StringBuilder sb, int? entity, int? attribute, int line)
    {
        while (true)
        {
            if (string.CompareOrdinal(raw, i, "\\X0\\", 0, 4) == 0) return i + 4;
            if (i + digits > raw.Length || !IsHex(raw.AsSpan(i, digits)))
                throw new StepFormatException("BAD_STRING", $"a \\X{digits / 2}\\ hex run must hold groups of {digits} hex digits closed by \\X0\\", entity, attribute, line);
            int code = int.Parse(raw.AsSpan(i, digits), NumberStyles.HexNumber, CultureInfo.InvariantCulture);
            if (digits == 4) sb.Append((char)code);
            else sb.Append(char.ConvertFromUtf32(code));
            i += digits;
        }
    }

    private static bool IsHex(ReadOnlySpan<char> s)
    {
        foreach (char c in s) if (!char.IsAsciiHexDigit(c)) return false;
        return true;
    }

    private static string Head(string s) => s.Length <= 4 ? s : s[..4];

    /// <summary>Encodes a string for writing: quotes doubled, backslash doubled, anything outside printable ASCII as \X2\.</summary>
    public static string Encode(string value)
    {
        var sb = new StringBuilder("'");
        int i = 0;
        while (i < value.Length)
        {
            char c = value[i];
            if (c >= 0x20 && c < 0x7F)
            {
                if (c == '\'') sb.Append("''");
                else if (c == '\\') sb.Append("\\\\");
                else sb.Append(c);
                i++;
                continue;
            }
            sb.Append("\\X2\\");
            while (i < value.Length && (value[i] < 0x20 || value[i] >= 0x7F))
            {
                sb.Append(((int)value[i]).ToString("X4", CultureInfo.InvariantCulture));
                i++;
            }
            sb.Append("\\X0\\");
        }
        return sb.Append('\'').ToString();
    }
}
