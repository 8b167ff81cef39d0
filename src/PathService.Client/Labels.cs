using System.Collections.Concurrent;
using System.Reflection;
using Google.Protobuf.Reflection;

namespace PathService.Client;

/// <summary>
/// The one rendering of contract enum values for people and for telemetry: the value's name in the contract without
/// the enum's prefix, in lower snake case (CRITICAL_POINT_KIND_LIMIT_POINT → limit_point, STOP_REASON_DIVERGED →
/// diverged). Console output, CSV files, metric attribute values and alert rules all use it, so the same value is
/// spelt the same everywhere; docs/api.md lists the mapping.
/// </summary>
public static class Labels
{
    private static readonly ConcurrentDictionary<(Type, int), string> Cache = new();

    /// <summary>The label of a generated contract enum value; an unknown number renders as its decimal value.</summary>
    public static string Of<TEnum>(TEnum value) where TEnum : struct, Enum => Of(typeof(TEnum), Convert.ToInt32(value, System.Globalization.CultureInfo.InvariantCulture));

    /// <summary>The label of value <paramref name="number"/> of the contract enum type <paramref name="enumType"/>.</summary>
    public static string Of(Type enumType, int number) => Cache.GetOrAdd((enumType, number), key => Render(key.Item1, key.Item2));

    private static string Render(Type enumType, int number)
    {
        var name = Enum.GetName(enumType, number);
        if (name is null) return number.ToString(System.Globalization.CultureInfo.InvariantCulture);
        var original = enumType.GetField(name)?.GetCustomAttribute<OriginalNameAttribute>()?.Name;
        if (original is null) return ToSnake(name);
        // The contract's prefix is the enum's own name in upper snake case (buf's ENUM_VALUE_PREFIX rule).
        string prefix = ToSnake(enumType.Name).ToUpperInvariant() + "_";
        string bare = original.StartsWith(prefix, StringComparison.Ordinal) ? original[prefix.Length..] : original;
        return bare.ToLowerInvariant();
    }

    private static string ToSnake(string pascal)
    {
        var sb = new System.Text.StringBuilder(pascal.Length + 8);
        for (int i = 0; i < pascal.Length; i++)
        {
            char c = pascal[i];
            if (char.IsUpper(c) && i > 0 && (char.IsLower(pascal[i - 1]) || (i + 1 < pascal.Length && char.IsLower(pascal[i + 1])))) sb.Append('_');
            sb.Append(char.ToLowerInvariant(c));
        }
        return sb.ToString();
    }
}
