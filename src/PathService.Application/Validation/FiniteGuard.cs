using System.Collections;
using Google.Protobuf;
using Google.Protobuf.Reflection;

using PathService.Application.Errors;

namespace PathService.Application.Validation;

/// <summary>
/// No response carries NaN or ±∞: the engine rejects non-finite iterates, but a model with extreme magnitudes can
/// still overflow in a linear solve or a derived quantity. A response with such a number is refused
/// (<see cref="Refusals.NonFinite"/>, reason NON_FINITE_RESULT) instead of reaching the caller, in every mode.
/// </summary>
public static class FiniteGuard
{
    public static void ThrowIfNonFinite(IMessage message)
    {
        if (Find(message, "") is { } where) throw Refusals.NonFinite(where);
    }

    /// <summary>Path of the first non-finite double in the message tree, or null.</summary>
    public static string? Find(IMessage m, string path)
    {
        foreach (var f in m.Descriptor.Fields.InFieldNumberOrder())
        {
            if (f.FieldType is not (FieldType.Double or FieldType.Message)) continue;
            var value = f.Accessor.GetValue(m);
            if (f.IsRepeated)
            {
                int i = 0;
                foreach (var item in (IEnumerable)value)
                {
                    if (item is double d && !double.IsFinite(d)) return $"{Join(path, f.Name)}[{i}]";
                    if (item is IMessage child && Find(child, $"{Join(path, f.Name)}[{i}]") is { } hit) return hit;
                    i++;
                }
            }
            else if (value is double d && !double.IsFinite(d)) return Join(path, f.Name);
            else if (value is IMessage child && Find(child, Join(path, f.Name)) is { } hit) return hit;
        }
        return null;
    }

    private static string Join(string path, string name) => path.Length == 0 ? name : $"{path}.{name}";
}
