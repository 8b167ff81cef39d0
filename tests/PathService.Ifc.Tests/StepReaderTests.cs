using System.Text;
using PathService.Ifc.Step;

namespace PathService.Ifc.Tests;

/// <summary>The clear-text encoding of ISO 10303-21:2016: tokens, strings with their escapes, typed parameters, comments.</summary>
public class StepReaderTests
{
    private static StepFile Read(string data, string schema = "IFC4") =>
        StepReader.Read(new MemoryStream(Encoding.UTF8.GetBytes(IfcText.Wrap(data, schema))), 1 << 20, ["IFC4", "IFC2X3"]);

    [Fact]
    public void Parameters_of_every_kind_are_read_with_their_values()
    {
        var f = Read("#1 = IFCTHING($, *, 12, -3.5E-2, 'it''s', .T., #1, (1., (2, 'x')), IFCLENGTHMEASURE(1.25), \"0FF\", 7.);");
        var a = f.Entities[1].Attributes;
        Assert.Equal("IFCTHING", f.Entities[1].Type);
        Assert.IsType<StepNull>(a[0]);
        Assert.IsType<StepDerived>(a[1]);
        Assert.Equal(12L, Assert.IsType<StepInteger>(a[2]).Value);
        Assert.Equal(-0.035, Assert.IsType<StepReal>(a[3]).Value);
        Assert.Equal("it's", Assert.IsType<StepString>(a[4]).Value);
        Assert.Equal("T", Assert.IsType<StepEnum>(a[5]).Value);
        Assert.Equal(1, Assert.IsType<StepRef>(a[6]).Number);
        var list = Assert.IsType<StepList>(a[7]);
        Assert.Equal(1.0, Assert.IsType<StepReal>(list.Items[0]).Value);
        Assert.Equal("x", Assert.IsType<StepString>(Assert.IsType<StepList>(list.Items[1]).Items[1]).Value);
        var typed = Assert.IsType<StepTyped>(a[8]);
        Assert.Equal(("IFCLENGTHMEASURE", 1.25), (typed.TypeName, Assert.IsType<StepReal>(typed.Inner).Value));
        Assert.Equal("0FF", Assert.IsType<StepBinary>(a[9]).Hex);
        Assert.Equal(7.0, Assert.IsType<StepReal>(a[10]).Value);
    }

    [Fact]
    public void String_escapes_of_clause_6_4_3_decode_to_their_characters()
    {
        // \X2\ UTF-16 hex (é = 00E9, Ω = 03A9), \X\ one ISO 8859-1 byte (Ä = C4), \\ a backslash, \S\ the upper half.
        var f = Read(@"#1=IFCLABEL('caf\X2\00E903A9\X0\ \X\C4 a\\b \S\D');");
        Assert.Equal("caféΩ Ä a\\b " + (char)('D' + 128), ((StepString)f.Entities[1].Attributes[0]).Value);
    }

    [Fact]
    public void Comments_between_tokens_and_line_breaks_are_skipped()
    {
        var f = Read("/* first */ #5 /* a */ = /* b */ IFCX( /* c */ 1 /* d */ ,\n 2 ) /* e */ ;");
        Assert.Equal(2, f.Entities[5].Attributes.Count);
        Assert.Equal(2L, ((StepInteger)f.Entities[5].Attributes[1]).Value);
    }

    [Fact]
    public void The_schema_is_read_from_FILE_SCHEMA()
    {
        Assert.Equal("IFC2X3", Read("#1=IFCX();", "IFC2X3").Schema);
    }

    [Fact]
    public void A_complex_instance_is_kept_with_its_records()
    {
        var f = Read("#1=(IFCA(1) IFCB('x'));");
        Assert.Equal("(COMPLEX)", f.Entities[1].Type);
        Assert.Equal(["IFCA", "IFCB"], f.Entities[1].Parts!.Select(p => p.Type));
    }

    [Fact]
    public void Strings_are_written_so_that_they_read_back()
    {
        const string text = "a 'quoted' \\ name é Ω\u0001";
        var f = Read($"#1=IFCLABEL({StepStrings.Encode(text)});");
        Assert.Equal(text, ((StepString)f.Entities[1].Attributes[0]).Value);
    }
}
