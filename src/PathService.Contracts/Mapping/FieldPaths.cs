using System.Text;
using PathService.Engine.Model;

namespace PathService.Contracts.Mapping;

/// <summary>
/// Translates the engine's field paths (written in the lower_snake_case of the model definition, e.g. <c>bars[3].area</c>)
/// into paths of the request message (e.g. <c>model.bars[3].area</c>), so that a client can point at its own field.
/// </summary>
public static class FieldPaths
{
    public static string ToRequestPath(string enginePath)
    {
        if (enginePath.StartsWith("controls", StringComparison.Ordinal) || enginePath.StartsWith("imperfection", StringComparison.Ordinal)
            || enginePath.StartsWith("amplitudes", StringComparison.Ordinal)) return enginePath;
        if (enginePath.StartsWith("loads", StringComparison.Ordinal)) return "load_case" + enginePath["loads".Length..];
        if (enginePath.StartsWith("load_sets", StringComparison.Ordinal)) return "load_case.load_sets" + enginePath["load_sets".Length..];
        if (enginePath.StartsWith("combination", StringComparison.Ordinal) || enginePath.StartsWith("gravity", StringComparison.Ordinal)) return "load_case." + enginePath;
        return "model." + enginePath;
    }

    /// <summary>Stable UPPER_SNAKE_CASE code of a finding, e.g. NonPositiveArea → NON_POSITIVE_AREA.</summary>
    public static string CodeName(FindingCode code)
    {
        var name = code.ToString();
        var sb = new StringBuilder(name.Length + 8);
        for (int i = 0; i < name.Length; i++)
        {
            if (i > 0 && char.IsUpper(name[i])) sb.Append('_');
            sb.Append(char.ToUpperInvariant(name[i]));
        }
        return sb.ToString();
    }
}
