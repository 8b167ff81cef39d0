namespace PathService.Cli.Plots;

/// <summary>Geometry and one state of the structure for the deformed-shape picture. Vectors hold 3 entries per node.</summary>
/// <param name="UpAxis">The global axis (0 = x, 1 = y, 2 = z) that points up in the model: the plan looks down it and
/// the elevation shows it vertical. See <see cref="UpAxisOf"/>.</param>
internal sealed record ShapeInput(string Title, string LengthUnit, double[] Coordinates, (int Start, int End)[] Bars,
    double[] Displacements, double[] BarForces, double? Scale, string Caution, int UpAxis = 2);

/// <summary>
/// Renders the undeformed (thin grey) and deformed (scaled; tension and compression in two colours) structure in plan
/// (looking down the model's up axis) and elevation (the up axis vertical), side by side, with the displacement scale
/// stated and each view labelled by its axes.
/// </summary>
internal static class DeformedShapePlot
{
    private static readonly string[] AxisNames = ["x", "y", "z"];

    /// <summary>
    /// The up axis of a model: the axis opposite to gravity when self-weight is part of the loads, otherwise the axis
    /// of the largest component of the resultant of the reference and constant loads (structures are loaded mostly
    /// downwards: common practice, no source), and z when the loads say nothing.
    /// </summary>
    public static int UpAxisOf(double[]? gravity, double[] loadResultant)
    {
        var v = gravity is { } g && g.Any(c => c != 0) ? g : loadResultant;
        int axis = 2;
        double best = 0;
        for (int a = 0; a < 3; a++)
            if (Math.Abs(v[a]) > best * (1 + 1e-9)) { best = Math.Abs(v[a]); axis = a; }
        return axis;
    }

    private const double PanelW = 420, PanelH = 380, Margin = 40, Header = 60, Footer = 50;
    private const string Tension = "#1f5fa8", Compression = "#b3261e", Undeformed = "#b5b5b5";

    public static string Render(ShapeInput input)
    {
        int n = input.Coordinates.Length / 3;
        double extent = 0;
        for (int a = 0; a < 3; a++)
        {
            var vals = Enumerable.Range(0, n).Select(k => input.Coordinates[3 * k + a]).ToList();
            extent = Math.Max(extent, vals.Max() - vals.Min());
        }
        double maxDisp = input.Displacements.Select(Math.Abs).DefaultIfEmpty(0).Max();
        // Default scale: largest displacement drawn as a tenth of the model's extent (common practice, no source).
        double scale = input.Scale ?? (maxDisp > 0 ? 0.1 * extent / maxDisp : 1);
        if (maxDisp * scale < 1e-12 * Math.Max(extent, 1)) scale = 1;
        var deformed = new double[input.Coordinates.Length];
        for (int k = 0; k < deformed.Length; k++) deformed[k] = input.Coordinates[k] + scale * input.Displacements[k];

        double width = 2 * PanelW + 3 * Margin, height = PanelH + Header + Footer;
        var svg = new SvgWriter(width, height, input.Title);
        svg.Text(Margin, 28, input.Title, 16, cls: "title");
        svg.Text(Margin, 46, $"displacements × {scale:G3} (largest {maxDisp:G3} {input.LengthUnit}); tension blue, compression red", 11, cls: "scale-note");
        // Plan: the two other axes, the one along which the model is longer drawn horizontally; elevation: that axis
        // horizontal and the up axis vertical (so a plane truss standing in its plane is seen face on).
        int up = Math.Clamp(input.UpAxis, 0, 2), first = (up + 1) % 3, second = (up + 2) % 3;
        if (Extent(input.Coordinates, second) > Extent(input.Coordinates, first) * (1 + 1e-9)) (first, second) = (second, first);
        Panel(svg, input, deformed, first, second, Margin, $"plan ({AxisNames[first]}–{AxisNames[second]}, {AxisNames[up]} up)");
        Panel(svg, input, deformed, first, up, 2 * Margin + PanelW, $"elevation ({AxisNames[first]}–{AxisNames[up]})");
        svg.Text(Margin, height - 14, input.Caution, 8.5, cls: "caution", fill: "#666666");
        return svg.ToString();
    }

    private static double Extent(double[] coordinates, int axis)
    {
        double min = double.MaxValue, max = double.MinValue;
        for (int k = axis; k < coordinates.Length; k += 3) { min = Math.Min(min, coordinates[k]); max = Math.Max(max, coordinates[k]); }
        return coordinates.Length == 0 ? 0 : max - min;
    }

    private static void Panel(SvgWriter svg, ShapeInput input, double[] deformed, int h, int v, double ox, string label)
    {
        int n = input.Coordinates.Length / 3;
        var all = Enumerable.Range(0, n).SelectMany(k => new[] { (input.Coordinates[3 * k + h], input.Coordinates[3 * k + v]), (deformed[3 * k + h], deformed[3 * k + v]) }).ToList();
        double minH = all.Min(p => p.Item1), maxH = all.Max(p => p.Item1), minV = all.Min(p => p.Item2), maxV = all.Max(p => p.Item2);
        double span = Math.Max(Math.Max(maxH - minH, maxV - minV), 1e-9);
        double s = (PanelW - 20) / span;
        double cx = ox + PanelW / 2, cy = Header + PanelH / 2;
        double midH = (minH + maxH) / 2, midV = (minV + maxV) / 2;
        (double, double) P(double a, double b) => (cx + (a - midH) * s, cy - (b - midV) * s);

        svg.Raw($"<rect class=\"panel\" x=\"{SvgWriter.F(ox)}\" y=\"{SvgWriter.F(Header)}\" width=\"{SvgWriter.F(PanelW)}\" height=\"{SvgWriter.F(PanelH)}\" fill=\"none\" stroke=\"#dddddd\"/>");
        svg.Text(ox + 8, Header + 16, label, 12, cls: "view-label");
        foreach (var (i, j) in input.Bars)
        {
            var (x1, y1) = P(input.Coordinates[3 * i + h], input.Coordinates[3 * i + v]);
            var (x2, y2) = P(input.Coordinates[3 * j + h], input.Coordinates[3 * j + v]);
            svg.Line(x1, y1, x2, y2, Undeformed, 0.8, cls: "bar-undeformed");
        }
        for (int b = 0; b < input.Bars.Length; b++)
        {
            var (i, j) = input.Bars[b];
            var (x1, y1) = P(deformed[3 * i + h], deformed[3 * i + v]);
            var (x2, y2) = P(deformed[3 * j + h], deformed[3 * j + v]);
            double f = b < input.BarForces.Length ? input.BarForces[b] : 0;
            svg.Line(x1, y1, x2, y2, f >= 0 ? Tension : Compression, 1.6, cls: "bar-deformed");
        }
        svg.Text(ox + PanelW - 8, Header + PanelH - 8, $"{input.LengthUnit}", 10, "end");
    }
}
