using System.Globalization;
using System.Text;

namespace PathService.Ifc.Step;

/// <summary>
/// A streaming reader of the clear-text encoding of the exchange structure, ISO 10303-21:2016: "ISO-10303-21;", the
/// HEADER section (FILE_DESCRIPTION, FILE_NAME, FILE_SCHEMA), one or more DATA sections of entity instances
/// "#n = KEYWORD(parameters);" and "END-ISO-10303-21;". Every syntax error names the instance, the attribute (1-based)
/// and the line; a file that ends early says what is unterminated. The schema is checked as soon as FILE_SCHEMA is
/// read, before the data section, so a file in an unsupported schema costs nothing to refuse.
/// </summary>
public static class StepReader
{
    /// <summary>Reads a whole exchange structure from <paramref name="stream"/>, reading at most <paramref name="maxBytes"/> bytes.</summary>
    public static StepFile Read(Stream stream, long maxBytes, IReadOnlyCollection<string> supportedSchemas)
    {
        ArgumentNullException.ThrowIfNull(stream);
        var scanner = new StepScanner(new SizeLimitedStream(stream, maxBytes));
        return new Parser(scanner).ReadFile(supportedSchemas);
    }

    private sealed class Parser(StepScanner s)
    {
        private int? _entity;
        private int? _attribute;
        private int _depth;

        /// <summary>Deepest nesting of lists and typed parameters accepted (IFC needs 3); keeps a hostile file off the stack.</summary>
        public const int MaxNesting = 32;

        private StepFormatException Error(string code, string message) => new(code, message, _entity, _attribute, s.Line);

        private void Space()
        {
            s.SkipSpace();
        }

        private StepFormatException Truncated(string what) => new("TRUNCATED", what, _entity, null, s.Line);

        private void Expect(char c, string where)
        {
            Space();
            int got = s.Peek();
            if (got < 0) throw EndOfFile();
            if (got != c) throw Error("SYNTAX", $"expected '{c}' {where}, found '{(char)got}'");
            s.Read();
        }

        private StepFormatException EndOfFile() =>
            _entity is { } e
                ? Truncated($"the file ends inside entity instance #{e}, which is unterminated (no closing ');')")
                : Truncated("the file ends early");

        private void ExpectWord(string word)
        {
            Space();
            if (s.AtEnd) throw Truncated($"the file ends where '{word}' is expected");
            string got = s.ReadWord();
            if (!string.Equals(got, word, StringComparison.Ordinal))
                throw Error("SYNTAX", $"expected '{word}', found '{(got.Length == 0 ? ((char)s.Peek()).ToString() : got)}'");
        }

        public StepFile ReadFile(IReadOnlyCollection<string> supportedSchemas)
        {
            Space();
            if (s.AtEnd) throw Truncated("the file is empty");
            string magic = s.ReadWord();
            if (magic != "ISO-10303-21")
                throw Error("NOT_STEP", $"not an ISO 10303-21 exchange structure: it must start with 'ISO-10303-21;', found '{magic}'");
            Expect(';', "after ISO-10303-21");
            ExpectWord("HEADER");
            Expect(';', "after HEADER");
            string? schema = null;
            while (true)
            {
                Space();
                if (s.AtEnd) throw Truncated("the file ends inside the HEADER section (ENDSEC; is missing)");
                string word = s.ReadWord();
                if (word == "ENDSEC") { Expect(';', "after ENDSEC"); break; }
                if (word.Length == 0) throw Error("SYNTAX", $"expected a header entity or ENDSEC, found '{(char)s.Peek()}'");
                var attrs = ReadRecordBody(word);
                Expect(';', $"after the header entity {word}");
                if (word == "FILE_SCHEMA") schema = SchemaOf(attrs);
            }
            if (schema is null) throw Error("NO_SCHEMA", "the HEADER section has no FILE_SCHEMA");
            if (!supportedSchemas.Contains(schema))
                throw new StepFormatException("UNSUPPORTED_SCHEMA",
                    $"the file's schema '{schema}' (FILE_SCHEMA) is not supported; supported: {string.Join(", ", supportedSchemas)}");

            var entities = new Dictionary<int, StepEntity>();
            bool anyData = false;
            while (true)
            {
                Space();
                if (s.AtEnd)
                    throw Truncated(anyData ? "the file ends without 'END-ISO-10303-21;'" : "the file ends before the DATA section");
                string word = s.ReadWord();
                if (word == "END-ISO-10303-21") { Expect(';', "after END-ISO-10303-21"); break; }
                if (word != "DATA")
                    throw Error("SYNTAX", $"expected 'DATA' or 'END-ISO-10303-21', found '{(word.Length == 0 ? ((char)s.Peek()).ToString() : word)}'");
                Space();
                if (s.Peek() == '(') ReadList(); // the 2002+ data section may name its schema: DATA(('IFC4'));
                Expect(';', "after DATA");
                ReadDataSection(entities);
                anyData = true;
            }
            CheckReferences(entities);
            return new StepFile(schema, entities);
        }

        private string SchemaOf(IReadOnlyList<StepValue> attrs)
        {
            if (attrs.Count < 1 || attrs[0] is not StepList { Items.Count: > 0 } list || list.Items[0] is not StepString name)
                throw Error("NO_SCHEMA", "FILE_SCHEMA must hold a list of schema names, e.g. FILE_SCHEMA(('IFC4'))");
            if (list.Items.Count > 1)
                throw Error("UNSUPPORTED_SCHEMA", $"FILE_SCHEMA names {list.Items.Count} schemas; one IFC schema is expected");
            return name.Value.Trim().ToUpperInvariant();
        }

        private void ReadDataSection(Dictionary<int, StepEntity> entities)
        {
            while (true)
            {
                Space();
                if (s.AtEnd) throw Truncated("the file ends inside the DATA section (ENDSEC; and END-ISO-10303-21; are missing)");
                int c = s.Peek();
                if (c != '#')
                {
                    string word = s.ReadWord();
                    if (word == "ENDSEC") { Expect(';', "after ENDSEC"); return; }
                    throw Error("SYNTAX", $"expected an entity instance '#n = ...;' or ENDSEC, found '{(word.Length == 0 ? ((char)c).ToString() : word)}'");
                }
                s.Read();
                int line = s.Line;
                int number = ReadInstanceNumber();
                _entity = number;
                if (entities.ContainsKey(number))
                    throw Error("DUPLICATE_ENTITY", $"entity instance #{number} is defined twice (first on line {entities[number].Line})");
                Expect('=', $"after #{number}");
                Space();
                if (s.AtEnd) throw EndOfFile();
                StepEntity entity;
                if (s.Peek() == '(')
                {
                    // A complex instance (ISO 10303-21 external mapping): several simple records in one instance.
                    s.Read();
                    var parts = new List<(string, IReadOnlyList<StepValue>)>();
                    while (true)
                    {
                        Space();
                        if (s.AtEnd) throw EndOfFile();
                        if (s.Peek() == ')') { s.Read(); break; }
                        string kw = ReadKeyword();
                        parts.Add((kw, ReadRecordBody(kw)));
                    }
                    entity = new StepEntity(number, "(COMPLEX)", [], line, parts);
                }
                else
                {
                    string type = ReadKeyword();
                    entity = new StepEntity(number, type, ReadRecordBody(type), line);
                }
                Expect(';', $"to close entity instance #{number}");
                entities.Add(number, entity);
                _entity = null;
            }
        }

        private int ReadInstanceNumber()
        {
            var sb = new StringBuilder();
            while (s.Peek() >= 0 && char.IsAsciiDigit((char)s.Peek())) sb.Append((char)s.Read());
            if (s.AtEnd && sb.Length == 0) throw Truncated("the file ends after '#'");
            if (sb.Length == 0) throw Error("SYNTAX", "'#' must be followed by the instance number");
            if (!int.TryParse(sb.ToString(), NumberStyles.None, CultureInfo.InvariantCulture, out int n) || n <= 0)
                throw Error("SYNTAX", $"instance number #{sb} is out of range (1 to {int.MaxValue})");
            return n;
        }

        private string ReadKeyword()
        {
            Space();
            if (s.AtEnd) throw EndOfFile();
            string kw = s.ReadWord();
            if (kw.Length == 0 || !(char.IsAsciiLetter(kw[0]) || kw[0] == '!'))
                throw Error("SYNTAX", $"expected an entity keyword, found '{(kw.Length == 0 ? ((char)s.Peek()).ToString() : kw)}'");
            return kw.ToUpperInvariant();
        }

        /// <summary>Reads "(p1, p2, ...)" after a keyword, numbering the attributes from 1 for error messages.</summary>
        private IReadOnlyList<StepValue> ReadRecordBody(string keyword)
        {
            Expect('(', $"after the keyword {keyword}");
            var values = new List<StepValue>();
            Space();
            if (s.Peek() == ')') { s.Read(); return values; }
            while (true)
            {
                _attribute = values.Count + 1;
                values.Add(ReadParameter());
                Space();
                int c = s.Peek();
                if (c < 0) throw EndOfFile();
                s.Read();
                if (c == ')') break;
                if (c != ',') throw Error("SYNTAX", $"expected ',' or ')' after a parameter, found '{(char)c}'");
            }
            _attribute = null;
            return values;
        }

        private StepValue ReadParameter()
        {
            if (++_depth > MaxNesting)
                throw Error("SYNTAX", $"lists or typed parameters are nested deeper than {MaxNesting}");
            try
            {
                return ReadParameterBody();
            }
            finally
            {
                _depth--;
            }
        }

        private StepValue ReadParameterBody()
        {
            Space();
            int c = s.Peek();
            if (c < 0) throw EndOfFile();
            switch (c)
            {
                case '$': s.Read(); return StepNull.Instance;
                case '*': s.Read(); return StepDerived.Instance;
                case '#':
                {
                    s.Read();
                    var sb = new StringBuilder();
                    while (s.Peek() >= 0 && char.IsAsciiDigit((char)s.Peek())) sb.Append((char)s.Read());
                    if (!int.TryParse(sb.ToString(), NumberStyles.None, CultureInfo.InvariantCulture, out int n) || n <= 0)
                        throw Error("SYNTAX", $"a reference must be '#' and a positive instance number, found '#{sb}'");
                    return new StepRef(n);
                }
                case '\'': return ReadString();
                case '"':
                {
                    s.Read();
                    var sb = new StringBuilder();
                    while (s.Peek() >= 0 && s.Peek() != '"') sb.Append((char)s.Read());
                    if (s.AtEnd) throw EndOfFile();
                    s.Read();
                    return new StepBinary(sb.ToString());
                }
                case '.':
                {
                    s.Read();
                    var sb = new StringBuilder();
                    while (s.Peek() >= 0 && s.Peek() != '.')
                    {
                        char d = (char)s.Read();
                        if (!(char.IsAsciiLetterOrDigit(d) || d == '_'))
                            throw Error("SYNTAX", $"an enumeration is written .NAME. with letters, digits and '_', found '{d}'");
                        sb.Append(d);
                    }
                    if (s.AtEnd) throw EndOfFile();
                    s.Read();
                    return new StepEnum(sb.ToString().ToUpperInvariant());
                }
                case '(': return ReadList();
            }
            if (char.IsAsciiDigit((char)c) || c is '+' or '-') return ReadNumber();
            if (char.IsAsciiLetter((char)c) || c == '!')
            {
                string type = ReadKeyword();
                Expect('(', $"after the type {type} of a typed parameter");
                var inner = ReadParameter();
                Expect(')', $"to close the typed parameter {type}(...)");
                return new StepTyped(type, inner);
            }
            throw Error("SYNTAX", $"'{(char)c}' cannot start a parameter");
        }

        private StepList ReadList()
        {
            s.Read();
            var items = new List<StepValue>();
            Space();
            if (s.Peek() == ')') { s.Read(); return new StepList(items); }
            while (true)
            {
                items.Add(ReadParameter());
                Space();
                int c = s.Peek();
                if (c < 0) throw EndOfFile();
                s.Read();
                if (c == ')') return new StepList(items);
                if (c != ',') throw Error("SYNTAX", $"expected ',' or ')' in a list, found '{(char)c}'");
            }
        }

        private StepString ReadString()
        {
            s.Read();
            var sb = new StringBuilder();
            int startLine = s.Line;
            while (true)
            {
                int c = s.Read();
                if (c < 0)
                    throw Truncated(_entity is { } e
                        ? $"the file ends inside a string opened on line {startLine} in entity instance #{e}, which is unterminated"
                        : $"the file ends inside a string opened on line {startLine}");
                if (c == '\'')
                {
                    if (s.Peek() == '\'') { s.Read(); sb.Append('\''); continue; }
                    break;
                }
                if (c is '\r' or '\n') continue; // ISO 10303-21: line breaks inside a string are not part of it
                sb.Append((char)c);
            }
            return new StepString(StepStrings.Decode(sb.ToString(), _entity, _attribute, s.Line));
        }

        private StepValue ReadNumber()
        {
            var sb = new StringBuilder();
            while (s.Peek() >= 0)
            {
                char d = (char)s.Peek();
                if (char.IsAsciiDigit(d) || d is '+' or '-' or '.' or 'E' or 'e') sb.Append((char)s.Read());
                else break;
            }
            string text = sb.ToString();
            if (text.Contains('.'))
            {
                if (double.TryParse(text, NumberStyles.Float, CultureInfo.InvariantCulture, out double r) && double.IsFinite(r))
                    return new StepReal(r);
                throw Error("BAD_NUMBER", $"'{text}' is not a finite real");
            }
            if (text.Contains('E') || text.Contains('e'))
                throw Error("BAD_NUMBER", $"'{text}' is not a number: a real needs a decimal point (ISO 10303-21 REAL)");
            if (long.TryParse(text, NumberStyles.AllowLeadingSign, CultureInfo.InvariantCulture, out long i))
                return new StepInteger(i);
            throw Error("BAD_NUMBER", $"'{text}' is not an integer");
        }

        private static void CheckReferences(Dictionary<int, StepEntity> entities)
        {
            foreach (var e in entities.Values.OrderBy(e => e.Number))
            {
                if (e.Parts is { } parts)
                {
                    foreach (var (_, attrs) in parts) Check(e, attrs);
                    continue;
                }
                Check(e, e.Attributes);
            }

            void Check(StepEntity e, IReadOnlyList<StepValue> attrs)
            {
                for (int i = 0; i < attrs.Count; i++)
                {
                    if (FirstMissing(attrs[i]) is { } missing)
                        throw new StepFormatException("DANGLING_REFERENCE",
                            $"{e.Type} refers to #{missing}, which the file does not define", e.Number, i + 1, e.Line);
                }
            }

            int? FirstMissing(StepValue v) => v switch
            {
                StepRef r => entities.ContainsKey(r.Number) ? null : r.Number,
                StepList l => l.Items.Select(FirstMissing).FirstOrDefault(m => m is not null),
                StepTyped t => FirstMissing(t.Inner),
                _ => null,
            };
        }
    }
}
