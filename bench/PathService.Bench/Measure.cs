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

    /// <summary>
    /// Runs tangent, residual, factorisation and solve in turn, as an iteration does, and returns the sorted ratios
    /// (tangent + residual + solve) / factorisation of each repetition (after one warm-up repetition).
    /// </summary>
    public static double[] IterationRatios(Action tangent, Action residual, Action factorize, Action solve, int repeats)
    {
        var ratios = new double[repeats];
        for (int r = -1; r < repeats; r++)
        {
            long t0 = Stopwatch.GetTimestamp();
            tangent();
            residual();
            long t1 = Stopwatch.GetTimestamp();
            factorize();
            long t2 = Stopwatch.GetTimestamp();
            solve();
            long t3 = Stopwatch.GetTimestamp();
            if (r >= 0) ratios[r] = (double)(t1 - t0 + t3 - t2) / (t2 - t1);
        }
        Array.Sort(ratios);
        return ratios;
    }

    /// <summary>
    /// Times a and b alternately (after one warm-up of each) and returns the sorted ratios time(b)/time(a) of each pair,
    /// so that both sides of every ratio ran under the same machine conditions.
    /// </summary>
    public static double[] PairedRatios(Action a, Action b, int repeats)
    {
        a(); b();
        var ratios = new double[repeats];
        for (int r = 0; r < repeats; r++)
        {
            long t0 = Stopwatch.GetTimestamp();
            a();
            long t1 = Stopwatch.GetTimestamp();
            b();
            long t2 = Stopwatch.GetTimestamp();
            ratios[r] = (double)(t2 - t1) / (t1 - t0);
        }
        Array.Sort(ratios);
        return ratios;
    }

    public static string Ms(double seconds) => $"{seconds * 1000,9:F2} ms";
}
