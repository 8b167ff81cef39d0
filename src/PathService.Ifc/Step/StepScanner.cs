using System.Text;

namespace PathService.Ifc.Step;

/// <summary>
/// Character-level access to an exchange structure read from a stream through a buffered reader (the file is never
/// held as one string): one character of look-ahead, line counting, and skipping of white space and comments
/// ("/* ... */", ISO 10303-21:2016 clause 5.6 from memory).
/// </summary>
internal sealed class StepScanner
{
    private readonly TextReader _reader;

    public StepScanner(Stream stream)
    {
        // ISO 10303-21:2016 allows UTF-8 directly in strings; 7-bit files read the same.
        _reader = new StreamReader(stream, new UTF8Encoding(false, false), detectEncodingFromByteOrderMarks: true, 1 << 16);
    }

    public int Line { get; private set; } = 1;

    public int Peek() => _reader.Peek();

    public int Read()
    {
        int c = _reader.Read();
        if (c == '\n') Line++;
        return c;
    }

    public bool AtEnd => _reader.Peek() < 0;

    /// <summary>Skips white space and comments. Returns false when the file ends inside a comment.</summary>
    public bool SkipSpace()
    {
        while (true)
        {
            int c = Peek();
            if (c < 0) return true;
            if (c is ' ' or '\t' or '\r' or '\n' or '\f') { Read(); continue; }
            if (c != '/') return true;
            Read();
            if (Peek() != '*')
                throw new StepFormatException("SYNTAX", "a lone '/' outside a string (comments are written /* ... */)", line: Line);
            Read();
            int startLine = Line;
            int prev = 0;
            while (true)
            {
                int d = Read();
                if (d < 0)
                    throw new StepFormatException("TRUNCATED", $"the file ends inside the comment opened on line {startLine}", line: Line);
                if (prev == '*' && d == '/') break;
                prev = d;
            }
        }
    }

    /// <summary>Reads a keyword or section word: letters, digits, '_', '-' and a leading '!' (user-defined keyword).</summary>
    public string ReadWord()
    {
        var sb = new StringBuilder();
        while (true)
        {
            int c = Peek();
            if (c < 0) break;
            if (char.IsAsciiLetterOrDigit((char)c) || c == '_' || c == '-' || (c == '!' && sb.Length == 0))
            {
                sb.Append((char)Read());
                continue;
            }
            break;
        }
        return sb.ToString();
    }
}
