using System.Security.Cryptography;
using System.Text;

namespace PathService.Ifc.Writing;

/// <summary>
/// Deterministic IfcGloballyUniqueId values: 128 bits taken from SHA-256 of a stable key (model name, kind, id), in
/// the 22-character encoding IFC uses for its GUIDs (the first character holds the top 2 bits, each further character
/// 6 bits, alphabet 0-9 A-Z a-z _ $; ISO 16739-1:2018, IfcGloballyUniqueId, from memory). The same model always gets
/// the same ids, so the written file is byte-for-byte reproducible.
/// </summary>
internal static class GlobalIds
{
    private const string Alphabet = "0123456789ABCDEFGHIJKLMNOPQRSTUVWXYZabcdefghijklmnopqrstuvwxyz_$";

    public static string For(string key)
    {
        var hash = SHA256.HashData(Encoding.UTF8.GetBytes(key));
        var chars = new char[22];
        // 128 bits = 2 + 21·6: read them as a big-endian number, most significant first.
        var value = new System.Numerics.BigInteger(hash.AsSpan(0, 16), isUnsigned: true, isBigEndian: true);
        for (int i = 21; i >= 0; i--)
        {
            chars[i] = Alphabet[(int)(value & 63)];
            value >>= 6;
        }
        return new string(chars);
    }
}
