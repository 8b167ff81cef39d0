using System.Diagnostics;

namespace PathService.Bench;

public static class Measure
{
    /// <summary>Median wall time of repeated runs (after one warm-up run).</summary>
    public static double MedianSeconds(Action action, int repeats)
    {
        action();
        var times = new double[repeats];
        for (int r = 0; r < repeats; r++)
        {
            long t0 = Stopwatch.GetTimestamp();
            action();
            times[r] = Stopwatch.GetElapsedTime(t0).TotalSeconds;
        }
        Array.Sort(times);
        return times[repeats / 2];
    }

    public static string Ms(double seconds) => $"{seconds * 1000,9:F2} ms";
}
