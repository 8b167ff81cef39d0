using System.Runtime.InteropServices;
using System.Runtime.Intrinsics;
using System.Runtime.Intrinsics.X86;

namespace PathService.Bench;

/// <summary>A one-line description of the machine the figures were measured on.</summary>
public static class Machine
{
    public static string Describe()
    {
        string model = "unknown";
        try
        {
            var line = File.ReadLines("/proc/cpuinfo").FirstOrDefault(l => l.StartsWith("model name", StringComparison.Ordinal));
            if (line != null) model = line[(line.IndexOf(':') + 1)..].Trim();
        }
        catch (IOException) { }
        double memGb = GC.GetGCMemoryInfo().TotalAvailableMemoryBytes / (1024.0 * 1024 * 1024);
        string simd = Avx512F.IsSupported && Vector512.IsHardwareAccelerated ? "AVX-512" : Avx2.IsSupported ? "AVX2" : Vector256.IsHardwareAccelerated ? "256-bit" : "scalar";
        return $"{Environment.ProcessorCount} logical CPUs, {model}, {memGb:F1} GiB, {RuntimeInformation.FrameworkDescription}, {RuntimeInformation.OSDescription}, SIMD {simd}{(Fma.IsSupported ? "+FMA" : "")}";
    }
}
