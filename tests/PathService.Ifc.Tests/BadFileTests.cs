using System.Diagnostics;
using System.Text;
using PathService.Ifc.Mapping;
using PathService.Ifc.Step;
using PathService.Ifc.Writing;

namespace PathService.Ifc.Tests;

/// <summary>Bad files are refused with a precise message (instance, attribute, why) and never crash or hang.</summary>
public class BadFileTests
{
    private static StepFormatException Refused(string text, IfcImportOptions? options = null) =>
        Assert.Throws<StepFormatException>(() => IfcText.Import(text, options));

    private static string RoofText() => IfcExport.WriteToString(TestStructures.TrussedRoof().Model, TestStructures.TrussedRoof().Loads).Text;

    [Fact]
    public void A_file_cut_inside_an_entity_names_the_unterminated_instance()
    {
        string full = RoofText();
        int cut = full.IndexOf("#40=", StringComparison.Ordinal) + 12;
        var e = Refused(full[..cut]);
        Assert.Equal("TRUNCATED", e.Code);
        Assert.Equal(40, e.Entity);
        Assert.Contains("#40", e.Message);
        Assert.Contains("unterminated", e.Message);
    }

    [Fact]
    public void A_file_cut_between_instances_says_ENDSEC_is_missing()
    {
        string full = RoofText();
        int cut = full.IndexOf("#41=", StringComparison.Ordinal);
        var e = Refused(full[..cut]);
        Assert.Equal("TRUNCATED", e.Code);
        Assert.Contains("ENDSEC", e.Message);
    }

    [Fact]
    public void A_file_without_its_end_keyword_says_so()
    {
        string full = RoofText();
        var e = Refused(full[..full.IndexOf("END-ISO-10303-21;", StringComparison.Ordinal)]);
        Assert.Equal("TRUNCATED", e.Code);
        Assert.Contains("END-ISO-10303-21;", e.Message);
    }

    [Fact]
    public void A_file_cut_inside_a_string_names_the_instance()
    {
        var e = Refused("ISO-10303-21;\nHEADER;\nFILE_SCHEMA(('IFC4'));\nENDSEC;\nDATA;\n#7=IFCMATERIAL('steel");
        Assert.Equal(("TRUNCATED", 7), (e.Code, e.Entity));
        Assert.Contains("string", e.Message);
    }

    [Fact]
    public void A_dangling_reference_names_the_referring_instance_and_attribute()
    {
        string text = RoofText().Replace("#12=IFCSTRUCTURALPOINTCONNECTION(", "#12=IFCSTRUCTURALPOINTCONNECTION(", StringComparison.Ordinal);
        // Point the first vertex at an instance that does not exist.
        int at = text.IndexOf("=IFCVERTEXPOINT(#", StringComparison.Ordinal);
        int close = text.IndexOf(')', at);
        int number = int.Parse(text[(text.LastIndexOf('\n', at) + 2)..at]);
        text = text[..(at + "=IFCVERTEXPOINT(".Length)] + "#999" + text[close..];
        var e = Refused(text);
        Assert.Equal("DANGLING_REFERENCE", e.Code);
        Assert.Equal((number, 1), (e.Entity, e.Attribute));
        Assert.Contains("#999", e.Message);
    }

    [Fact]
    public void An_unsupported_schema_is_refused_naming_it()
    {
        var e = Refused(IfcText.Wrap("#1=IFCX();", "IFC5X"));
        Assert.Equal("UNSUPPORTED_SCHEMA", e.Code);
        Assert.Contains("'IFC5X'", e.Message);
        Assert.Contains("IFC4", e.Message);
    }

    [Fact]
    public void A_wrong_attribute_type_names_instance_attribute_and_expected_kind()
    {
        string text = RoofText();
        int at = text.IndexOf("=IFCCARTESIANPOINT((", text.IndexOf("IFCLOCALPLACEMENT", StringComparison.Ordinal), StringComparison.Ordinal);
        int number = int.Parse(text[(text.LastIndexOf('\n', at) + 2)..at]);
        int close = text.IndexOf(";\n", at);
        text = text[..(at + "=IFCCARTESIANPOINT(".Length)] + "('a','b','c'))" + text[close..];
        var e = Refused(text);
        Assert.Equal("BAD_ATTRIBUTE", e.Code);
        Assert.Equal((number, 1), (e.Entity, e.Attribute));
        Assert.Contains("IFCCARTESIANPOINT.Coordinates item 1 must be a number, found a string", e.Message);
    }

    [Fact]
    public void A_reference_to_the_wrong_entity_type_is_refused_naming_both()
    {
        string text = IfcText.Wrap("#1=IFCDIRECTION((1.,0.,0.));\n#2=IFCAXIS2PLACEMENT3D(#1,$,$);\n#3=IFCLOCALPLACEMENT($,#2);\n" +
            "#4=IFCSTRUCTURALPOINTCONNECTION('g',$,'n',$,$,#3,$,$,$);\n#5=IFCSTRUCTURALPOINTCONNECTION('h',$,'m',$,$,#3,$,$,$);\n" +
            "#6=IFCSTRUCTURALCURVEMEMBER('i',$,'b',$,$,#3,$,.PIN_JOINED_MEMBER.,#1);\n" +
            "#7=IFCRELCONNECTSSTRUCTURALMEMBER('j',$,$,$,#6,#4,$,$,$,$);\n#8=IFCRELCONNECTSSTRUCTURALMEMBER('k',$,$,$,#6,#5,$,$,$,$);");
        var e = Refused(text);
        Assert.Equal((2, 1), (e.Entity, e.Attribute));
        Assert.Contains("Location refers to #1 of type IFCDIRECTION, expected IFCCARTESIANPOINT", e.Message);
    }

    [Fact]
    public void Syntax_errors_name_the_instance_the_attribute_and_the_line()
    {
        var e = Refused(IfcText.Wrap("#1=IFCX(1,2);\n#2=IFCY(1, 2 3);"));
        Assert.Equal(("SYNTAX", 2, 2), (e.Code, e.Entity, e.Attribute));
        Assert.Equal(9, e.Line);
        var real = Refused(IfcText.Wrap("#1=IFCX(1E5);"));
        Assert.Equal(("BAD_NUMBER", 1, 1), (real.Code, real.Entity, real.Attribute));
        var dup = Refused(IfcText.Wrap("#1=IFCX();\n#1=IFCY();"));
        Assert.Equal("DUPLICATE_ENTITY", dup.Code);
        Assert.Contains("first on line 8", dup.Message);
    }

    [Fact]
    public void Something_that_is_not_a_step_file_is_refused_at_its_first_word()
    {
        var e = Refused("<?xml version='1.0'?><ifc/>");
        Assert.Equal("NOT_STEP", e.Code);
    }

    /// <summary>A 100 MB file, generated on demand (numbered point instances, one line at a time), never held in memory.</summary>
    private sealed class GeneratedIfcStream(long length) : Stream
    {
        private byte[] _line = Encoding.ASCII.GetBytes("ISO-10303-21;\nHEADER;\nFILE_SCHEMA(('IFC4'));\nENDSEC;\nDATA;\n");
        private int _inLine;
        private int _instance;
        private long _position;
        public long Served => _position;

        public override int Read(byte[] buffer, int offset, int count)
        {
            int n = (int)Math.Min(count, length - _position);
            for (int i = 0; i < n; i++, _position++)
            {
                if (_inLine == _line.Length)
                {
                    _line = Encoding.ASCII.GetBytes($"#{++_instance}=IFCCARTESIANPOINT(({_instance}.,0.,0.));\n");
                    _inLine = 0;
                }
                buffer[offset + i] = _line[_inLine++];
            }
            return n;
        }

        public override bool CanRead => true;
        public override bool CanSeek => false;
        public override bool CanWrite => false;
        public override long Length => throw new NotSupportedException();
        public override long Position { get => _position; set => throw new NotSupportedException(); }
        public override void Flush() { }
        public override long Seek(long o, SeekOrigin s) => throw new NotSupportedException();
        public override void SetLength(long v) => throw new NotSupportedException();
        public override void Write(byte[] b, int o, int c) => throw new NotSupportedException();
    }

    [Fact]
    public void A_100_MB_stream_is_refused_by_the_size_limit_after_reading_little_more_than_the_limit()
    {
        var stream = new GeneratedIfcStream(100L << 20);
        var e = Assert.Throws<StepFormatException>(() => IfcImport.Read(stream, new IfcImportOptions { MaxBytes = 1 << 20 }));
        Assert.Equal("FILE_TOO_LARGE", e.Code);
        Assert.Contains("1048576 bytes", e.Message);
        // Refused after the limit plus at most one read buffer, not after 100 MB.
        Assert.True(stream.Served <= (1 << 20) + (1 << 17), $"read {stream.Served} bytes");
    }

    [Fact]
    public void A_seekable_stream_over_the_limit_is_refused_before_reading()
    {
        var stream = new MemoryStream(new byte[2048]);
        var e = Assert.Throws<StepFormatException>(() => IfcImport.Read(stream, new IfcImportOptions { MaxBytes = 1024 }));
        Assert.Equal("FILE_TOO_LARGE", e.Code);
        Assert.Equal(0, stream.Position);
    }

    [Fact]
    public void A_file_of_exactly_the_limit_is_accepted()
    {
        var bytes = Encoding.UTF8.GetBytes(RoofText());
        var result = IfcImport.Read(new MemoryStream(bytes), new IfcImportOptions { MaxBytes = bytes.Length });
        Assert.Equal(8, result.Model.Nodes.Count);
    }

    [Fact]
    public void Unknown_option_values_are_refused_naming_the_choices()
    {
        var ex = Assert.Throws<IfcOptionException>(() => IfcText.Import(RoofText(), new IfcImportOptions { ForceUnit = "kip" }));
        Assert.Equal(IfcOption.ForceUnit, ex.Option);
        Assert.Contains("'kip'", ex.Message);
        var group = Assert.Throws<IfcOptionException>(() => IfcText.Import(RoofText(), new IfcImportOptions { ReferenceLoadGroup = "wind" }));
        Assert.Equal(IfcOption.ReferenceLoadGroup, group.Option);
        Assert.Contains("'wind'", group.Message);
        Assert.Contains("'reference'", group.Message);
    }
}

/// <summary>Damaged copies of a valid file: every one is either read or refused with a StepFormatException, never a crash.</summary>
public class DamagedFileTests
{
    private static readonly string Canopy = File.ReadAllText(IfcText.FilePath("canopy-mm-kn.ifc"));
    private static readonly IfcImportOptions Options = new() { ReferenceLoadGroup = "snow" };

    [Fact]
    public void Every_truncation_of_the_canopy_file_is_refused_as_truncated_or_malformed()
    {
        for (int cut = 0; cut < Canopy.Length - 1; cut += 7)
        {
            var e = Assert.Throws<StepFormatException>(() => IfcText.Import(Canopy[..cut], Options));
            Assert.False(string.IsNullOrEmpty(e.Code));
        }
    }

    [Fact]
    public void Random_byte_damage_is_read_or_refused_with_a_specific_error()
    {
        var random = new Random(1716);
        int refused = 0;
        for (int trial = 0; trial < 400; trial++)
        {
            var chars = Canopy.ToCharArray();
            for (int k = 0; k < 3; k++) chars[random.Next(chars.Length)] = "#$*'(),.;=0123456789ABCDEFX\\"[random.Next(28)];
            try
            {
                IfcText.Import(new string(chars), Options);
            }
            catch (StepFormatException e)
            {
                Assert.Matches("^[A-Z_]+$", e.Code);
                refused++;
            }
            catch (ArgumentException)
            {
                refused++; // e.g. the load group's name was damaged: an option no longer matches
            }
        }
        Assert.True(refused > 100, $"only {refused} of 400 damaged files were refused");
    }

    [Fact]
    public void Deeply_nested_lists_are_refused_without_exhausting_the_stack()
    {
        var e = Assert.Throws<StepFormatException>(() => IfcText.Import(IfcText.Wrap("#1=IFCX(" + new string('(', 200_000) + ");")));
        Assert.Equal(("SYNTAX", 1), (e.Code, e.Entity));
        Assert.Contains("nested deeper than 32", e.Message);
    }
}
