using System.Collections;
using Google.Protobuf;
using Google.Protobuf.Reflection;

namespace PathService.Client.Calls;

/// <summary>The first field in which two messages of the same type differ, with both values (doubles compared bit for bit).</summary>
internal static class MessageDiff
{
    public static string? First(IMessage a, IMessage b, string path = "")
    {
        foreach (var field in a.Descriptor.Fields.InFieldNumberOrder())
        {
            string name = path.Length == 0 ? field.Name : $"{path}.{field.Name}";
            object va = field.Accessor.GetValue(a), vb = field.Accessor.GetValue(b);
            if (field.IsRepeated)
            {
                var la = ((IList)va).Cast<object>().ToList();
                var lb = ((IList)vb).Cast<object>().ToList();
                if (la.Count != lb.Count) return $"{name} has {la.Count} entries, previously {lb.Count}";
                for (int i = 0; i < la.Count; i++)
                    if (Value($"{name}[{i}]", la[i], lb[i]) is { } d) return d;
            }
            else if (Value(name, va, vb) is { } d) return d;
        }
        return null;
    }

    private static string? Value(string name, object? a, object? b) => (a, b) switch
    {
        (null, null) => null,
        (IMessage ma, IMessage mb) => First(ma, mb, name),
        (double da, double db) => BitConverter.DoubleToInt64Bits(da) == BitConverter.DoubleToInt64Bits(db) ? null : $"{name} is {da:R}, previously {db:R}",
        _ when Equals(a, b) => null,
        _ => $"{name} is {a ?? "unset"}, previously {b ?? "unset"}",
    };
}
