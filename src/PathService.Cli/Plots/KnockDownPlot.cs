namespace PathService.Cli.Plots;

/// <summary>One amplitude's first critical load factor.</summary>
internal readonly record struct KnockDownPoint(double Amplitude, double LoadFactor);

internal sealed record KnockDownInput(string Title, string AmplitudeLabel, double? PerfectLoadFactor, IReadOnlyList<KnockDownPoint> Points, string Caution);

/// <summary>The knock-down curve: first critical load factor against imperfection amplitude, with the perfect structure's load as a reference line.</summary>
internal static class KnockDownPlot
{
    private const double W = 760, H = 500, Left = 90, Right = 40, Top = 50, Bottom = 80;

    public static string Render(KnockDownInput input)
    {
        var svg = new SvgWriter(W, H, input.Title);
        var xs = input.Points.Select(p => p.Amplitude).Append(0).ToList();
        var ys = input.Points.Select(p => p.LoadFactor).Append(0).ToList();
        if (input.PerfectLoadFactor is { } pl) ys.Add(pl);
        var (x0, x1, dx) = NiceScale.For(xs.Min(), xs.Max());
        var (y0, y1, dy) = NiceScale.For(ys.Min(), ys.Max() * 1.05);
        double pw = W - Left - Right, ph = H - Top - Bottom;
        double X(double v) => Left + (v - x0) / (x1 - x0) * pw;
        double Y(double v) => Top + ph - (v - y0) / (y1 - y0) * ph;
        svg.Text(Left, 28, input.Title, 16, cls: "title");
        for (double v = x0; v <= x1 + dx * 1e-9; v += dx) { svg.Line(X(v), Top, X(v), Top + ph, "#e4e4e4"); svg.Text(X(v), Top + ph + 18, NiceScale.Label(v, dx), 11, "middle", "tick"); }
        for (double v = y0; v <= y1 + dy * 1e-9; v += dy) { svg.Line(Left, Y(v), Left + pw, Y(v), "#e4e4e4"); svg.Text(Left - 8, Y(v) + 4, NiceScale.Label(v, dy), 11, "end", "tick"); }
        svg.Line(Left, Top + ph, Left + pw, Top + ph, "#444444", 1.2, cls: "axis");
        svg.Line(Left, Top, Left, Top + ph, "#444444", 1.2, cls: "axis");
        svg.Text(Left + pw / 2, H - 30, input.AmplitudeLabel, 13, "middle", "axis-label");
        svg.Text(24, Top + ph / 2, "first critical load factor λ_cr", 13, "middle", "axis-label", -90);
        if (input.PerfectLoadFactor is { } perfect)
        {
            svg.Line(Left, Y(perfect), Left + pw, Y(perfect), "#2f7d32", 1.4, "6,4", "perfect-reference");
            svg.Text(Left + pw - 4, Y(perfect) - 6, $"perfect structure λ = {perfect:G5}", 11, "end", "perfect-label");
        }
        var pts = input.Points.OrderBy(p => p.Amplitude).Select(p => (X(p.Amplitude), Y(p.LoadFactor))).ToList();
        if (pts.Count > 0) svg.Polyline(pts, "#8b1c62", 2.2, null, "knock-down-curve");
        foreach (var (x, y) in pts) svg.Raw($"<circle class=\"knock-down-point\" cx=\"{SvgWriter.F(x)}\" cy=\"{SvgWriter.F(y)}\" r=\"3.5\" fill=\"#8b1c62\"/>");
        svg.Text(20, H - 8, input.Caution, 8.5, cls: "caution", fill: "#666666");
        return svg.ToString();
    }
}
