using System.Text;
using PathService.Ifc.Mapping;

namespace PathService.Ifc.Tests;

internal static class IfcText
{
    public static string FilePath(string name) => Path.Combine(AppContext.BaseDirectory, "Files", name);

    public static IfcImportResult Import(string text, IfcImportOptions? options = null) =>
        IfcImport.Read(new MemoryStream(Encoding.UTF8.GetBytes(text)), options);

    /// <summary>A minimal valid IFC4 file around the given data lines.</summary>
    public static string Wrap(string data, string schema = "IFC4") =>
        "ISO-10303-21;\nHEADER;\nFILE_DESCRIPTION((''),'2;1');\nFILE_NAME('t','2026-01-01T00:00:00',(''),(''),'','','');\n" +
        $"FILE_SCHEMA(('{schema}'));\nENDSEC;\nDATA;\n{data}\nENDSEC;\nEND-ISO-10303-21;\n";
}
