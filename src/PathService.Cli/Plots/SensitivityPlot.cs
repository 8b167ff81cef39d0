namespace PathService.Cli.Plots;

/// <summary>What the material-gain picture needs: geometry, the up axis, and dλ_cr/dV per bar (null where not given).</summary>
internal sealed record SensitivityInput(string Title, string LengthUnit, double[] Coordinates, (int Start, int End)[] Bars,
    string[] BarIds, double[] VolumeDerivative, int UpAxis, string Caution);

/// <summary>
/// The members coloured by dλ_cr/dV, the gain in critical load factor per unit of added material volume, in plan and
/// elevation: a diverging scale symmetric about zero (teal where material raises λ_cr, amber where it lowers it, pale
/// near zero), thicker lines for larger magnitudes, a legend with the unit, and the five best members named.
/// </summary>
internal static class SensitivityPlot
{
    private const double PanelW = 420, PanelH = 380, Margin = 40, Header = 70, Footer = 110;
    private static readonly string[] AxisNames = ["x", "y", "z"];

    public static string Render(SensitivityInput input)
    {
        double width = 2 * PanelW + 3 * Margin, height = PanelH + Header + Footer;
        var svg = new SvgWriter(width, height, input.Title);
        svg.Text(Margin, 28, input.Title, 16, cls: "title");
        svg.Text(Margin, 46, "members coloured by dλ_cr/dV: the gain in critical load factor per unit of added member volume (at fixed geometry)", 11, cls: "scale-note");
        svg.Text(Margin, 60, "a gradient is local: it predicts the effect of small changes only; re-trace the changed design to confirm", 10, cls: "gradient-caution", fill: "#666666");
        double top = input.VolumeDerivative.Select(Math.Abs).DefaultIfEmpty(0).Max();
        int up = Math.Clamp(input.UpAxis, 0, 2), first = (up + 1) % 3, second = (up + 2) % 3;
        if (Extent(input.Coordinates, second) > Extent(input.Coordinates, first) * (1 + 1e-9)) (first, second) = (second, first);
        Panel(svg, input, first, second, Margin, top, $"plan ({AxisNames[first]}–{AxisNames[second]}, {AxisNames[up]} up)");
        Panel(svg, input, first, up, 2 * Margin + PanelW, top, $"elevation ({AxisNames[first]}–{AxisNames[up]})");
        Legend(svg, Margin, Header + PanelH + 22, top, input.LengthUnit);
        var best = Enumerable.Range(0, input.Bars.Length).Where(b => input.VolumeDerivative[b] > 0)
            .OrderByDescending(b => input.VolumeDerivative[b]).Take(5).ToList();
        string ranking = best.Count == 0 ? "no member raises λ_cr when material is added"
            : "most effective members: " + string.Join(", ", best.Select(b => $"{input.BarIds[b]} ({input.VolumeDerivative[b]:G3})"));
        svg.Text(Margin, Header + PanelH + 70, ranking, 11, cls: "ranking");
        svg.Text(Margin, height - 14, input.Caution, 8.5, cls: "caution", fill: "#666666");
        return svg.ToString();
    }

    /// <summary>Colour of a value on the diverging scale: t in [−1, 1] from amber (−1) through pale grey (0) to teal (+1).</summary>
    public static string Colour(double t)
    {
        t = Math.Clamp(double.IsFinite(t) ? t : 0, -1, 1);
        (int R, int G, int B) pale = (226, 226, 220), teal = (0, 118, 118), amber = (196, 120, 0);
        var end = t >= 0 ? teal : amber;
        double a = Math.Abs(t);
        int Mix(int p, int q) => (int)Math.Round(p + (q - p) * a);
        return $"#{Mix(pale.R, end.R):x2}{Mix(pale.G, end.G):x2}{Mix(pale.B, end.B):x2}";
    }

    private static void Legend(SvgWriter svg, double x, double y, double top, string lengthUnit)
    {
        const int steps = 21;
        const double w = 14, h = 12;
        for (int k = 0; k < steps; k++)
        {
            double t = -1 + 2.0 * k / (steps - 1);
            svg.Raw($"<rect class=\"legend-swatch\" x=\"{SvgWriter.F(x + k * w)}\" y=\"{SvgWriter.F(y)}\" width=\"{SvgWriter.F(w)}\" height=\"{SvgWriter.F(h)}\" fill=\"{Colour(t)}\"/>");
        }
        string unit = $"1/{lengthUnit}³";
        svg.Text(x, y + h + 14, $"{-top:G3}", 10, cls: "legend-label");
        svg.Text(x + steps * w / 2, y + h + 14, "0", 10, "middle", cls: "legend-label");
        svg.Text(x + steps * w, y + h + 14, $"{top:G3}", 10, "end", cls: "legend-label");
        svg.Text(x + steps * w + 12, y + h - 1, $"dλ_cr/dV [{unit}]: amber lowers λ_cr, teal raises it", 11, cls: "legend-unit");
    }

    private static double Extent(double[] coordinates, int axis)
    {
        double min = double.MaxValue, max = double.MinValue;
        for (int k = axis; k < coordinates.Length; k += 3) { min = Math.Min(min, coordinates[k]); max = Math.Max(max, coordinates[k]); }
        return coordinates.Length == 0 ? 0 : max - min;
    }

    private static void Panel(SvgWriter svg, SensitivityInput input, int h, int v, double ox, double top, string label)
    {
        int n = input.Coordinates.Length / 3;
        double minH = double.MaxValue, maxH = double.MinValue, minV = double.MaxValue, maxV = double.MinValue;
        for (int k = 0; k < n; k++)
        {
            minH = Math.Min(minH, input.Coordinates[3 * k + h]); maxH = Math.Max(maxH, input.Coordinates[3 * k + h]);
            minV = Math.Min(minV, input.Coordinates[3 * k + v]); maxV = Math.Max(maxV, input.Coordinates[3 * k + v]);
        }
        double span = Math.Max(Math.Max(maxH - minH, maxV - minV), 1e-9);
        double s = (PanelW - 20) / span;
        double cx = ox + PanelW / 2, cy = Header + PanelH / 2, midH = (minH + maxH) / 2, midV = (minV + maxV) / 2;
        (double, double) P(double a, double b) => (cx + (a - midH) * s, cy - (b - midV) * s);
        svg.Raw($"<rect class=\"panel\" x=\"{SvgWriter.F(ox)}\" y=\"{SvgWriter.F(Header)}\" width=\"{SvgWriter.F(PanelW)}\" height=\"{SvgWriter.F(PanelH)}\" fill=\"none\" stroke=\"#dddddd\"/>");
        svg.Text(ox + 8, Header + 16, label, 12, cls: "view-label");
        // Small magnitudes first, so that the members that matter are drawn on top.
        foreach (int b in Enumerable.Range(0, input.Bars.Length).OrderBy(b => Math.Abs(input.VolumeDerivative[b])))
        {
            var (i, j) = input.Bars[b];
            double t = top > 0 ? input.VolumeDerivative[b] / top : 0;
            var (x1, y1) = P(input.Coordinates[3 * i + h], input.Coordinates[3 * i + v]);
            var (x2, y2) = P(input.Coordinates[3 * j + h], input.Coordinates[3 * j + v]);
            svg.Line(x1, y1, x2, y2, Colour(t), 0.8 + 2.2 * Math.Abs(t), cls: "bar-sensitivity");
        }
    }
}
