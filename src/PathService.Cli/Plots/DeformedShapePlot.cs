namespace PathService.Cli.Plots;

/// <summary>Geometry and one state of the structure for the deformed-shape picture. Vectors hold 3 entries per node.</summary>
/// <param name="UpAxis">The global axis (0 = x, 1 = y, 2 = z) that points up in the model: the plan looks down it and
/// the elevation shows it vertical. See <see cref="UpAxisOf"/>.</param>
internal sealed record ShapeInput(string Title, string LengthUnit, double[] Coordinates, (int Start, int End)[] Bars,
    double[] Displacements, double[] BarForces, double? Scale, string Caution, int UpAxis = 2)
{
    /// <summary>Beam elements of a rigid-jointed frame (node indices into the same vectors), drawn apart from the bars.</summary>
    public FrameMember[] FrameMembers { get; init; } = [];
    /// <summary>Unit label of the bending moments in the legend, e.g. "kN·m".</summary>
    public string MomentUnit { get; init; } = "kN·m";
}

/// <summary>
/// One beam element for the picture: its end nodes, its axial force (sign picks the colour, as for bars) and the
/// resultant bending moment √(M_y² + M_z²) at each end.
/// </summary>
internal sealed record FrameMember(int Start, int End, double AxialForce, double StartMoment, double EndMoment);

/// <summary>
/// Renders the undeformed (thin grey) and deformed (scaled; tension and compression in two colours) structure in plan
/// (looking down the model's up axis) and elevation (the up axis vertical), side by side, with the displacement scale
/// stated and each view labelled by its axes. Frame members (beams) are drawn as hollow double lines, so they read apart
/// from the bars' single lines, and their bending as an open ring at each element end whose area is proportional to the
/// end moment |M| (largest ring = largest |M| of the state, stated in a legend): a visual choice of our own.
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

    private const double PanelW = 420, PanelH = 380, Margin = 40, Header = 60, Footer = 50, LegendHeight = 22;
    /// <summary>Radius (px) of the ring of the largest end moment; rings below 10 % of the largest moment are left out (so the picture shows where bending concentrates).</summary>
    private const double RingMax = 7, RingCutoff = 0.1;
    private const string Ring = "#6b4c9a";
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

        bool frame = input.FrameMembers.Length > 0;
        double width = 2 * PanelW + 3 * Margin, height = PanelH + Header + Footer + (frame ? LegendHeight : 0);
        double maxMoment = input.FrameMembers.SelectMany(m => new[] { Math.Abs(m.StartMoment), Math.Abs(m.EndMoment) }).Where(double.IsFinite).DefaultIfEmpty(0).Max();
        var svg = new SvgWriter(width, height, input.Title);
        svg.Text(Margin, 28, input.Title, 16, cls: "title");
        svg.Text(Margin, 46, $"displacements × {scale:G3} (largest {maxDisp:G3} {input.LengthUnit}); tension blue, compression red", 11, cls: "scale-note");
        // Plan: the two other axes, the one along which the model is longer drawn horizontally; elevation: that axis
        // horizontal and the up axis vertical (so a plane truss standing in its plane is seen face on).
        int up = Math.Clamp(input.UpAxis, 0, 2), first = (up + 1) % 3, second = (up + 2) % 3;
        if (Extent(input.Coordinates, second) > Extent(input.Coordinates, first) * (1 + 1e-9)) (first, second) = (second, first);
        Panel(svg, input, deformed, first, second, Margin, $"plan ({AxisNames[first]}–{AxisNames[second]}, {AxisNames[up]} up)", maxMoment);
        Panel(svg, input, deformed, first, up, 2 * Margin + PanelW, $"elevation ({AxisNames[first]}–{AxisNames[up]})", maxMoment);
        if (frame) Legend(svg, Margin, Header + PanelH + 24, maxMoment, input.MomentUnit);
        svg.Text(Margin, height - 14, input.Caution, 8.5, cls: "caution", fill: "#666666");
        return svg.ToString();
    }

    private static double Extent(double[] coordinates, int axis)
    {
        double min = double.MaxValue, max = double.MinValue;
        for (int k = axis; k < coordinates.Length; k += 3) { min = Math.Min(min, coordinates[k]); max = Math.Max(max, coordinates[k]); }
        return coordinates.Length == 0 ? 0 : max - min;
    }

    private static void Panel(SvgWriter svg, ShapeInput input, double[] deformed, int h, int v, double ox, string label, double maxMoment)
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
        foreach (var m in input.FrameMembers)
        {
            var (x1, y1) = P(input.Coordinates[3 * m.Start + h], input.Coordinates[3 * m.Start + v]);
            var (x2, y2) = P(input.Coordinates[3 * m.End + h], input.Coordinates[3 * m.End + v]);
            svg.Line(x1, y1, x2, y2, Undeformed, 0.8, cls: "frame-undeformed");
        }
        for (int b = 0; b < input.Bars.Length; b++)
        {
            var (i, j) = input.Bars[b];
            var (x1, y1) = P(deformed[3 * i + h], deformed[3 * i + v]);
            var (x2, y2) = P(deformed[3 * j + h], deformed[3 * j + v]);
            double f = b < input.BarForces.Length ? input.BarForces[b] : 0;
            svg.Line(x1, y1, x2, y2, f >= 0 ? Tension : Compression, 1.6, cls: "bar-deformed");
        }
        foreach (var m in input.FrameMembers)
        {
            var (x1, y1) = P(deformed[3 * m.Start + h], deformed[3 * m.Start + v]);
            var (x2, y2) = P(deformed[3 * m.End + h], deformed[3 * m.End + v]);
            FrameLine(svg, x1, y1, x2, y2, m.AxialForce >= 0 ? Tension : Compression, "frame-deformed");
        }
        // Rings after all lines, so that no member hides one; each sits just inside its element, off the shared joint.
        if (maxMoment > 0)
            foreach (var m in input.FrameMembers)
            {
                var (x1, y1) = P(deformed[3 * m.Start + h], deformed[3 * m.Start + v]);
                var (x2, y2) = P(deformed[3 * m.End + h], deformed[3 * m.End + v]);
                MomentRing(svg, x1, y1, x2, y2, m.StartMoment, maxMoment);
                MomentRing(svg, x2, y2, x1, y1, m.EndMoment, maxMoment);
            }
        svg.Text(ox + PanelW - 8, Header + PanelH - 8, $"{input.LengthUnit}", 10, "end");
    }

    /// <summary>A hollow double line: a wide stroke in the axial-force colour with a white core.</summary>
    private static void FrameLine(SvgWriter svg, double x1, double y1, double x2, double y2, string stroke, string cls)
    {
        svg.Line(x1, y1, x2, y2, stroke, 3.6, cls: cls);
        svg.Line(x1, y1, x2, y2, "#ffffff", 1.2, cls: "frame-core");
    }

    /// <summary>An open ring of area ∝ |M| at the end (x1, y1) of an element, moved towards (x2, y2) by its radius.</summary>
    private static void MomentRing(SvgWriter svg, double x1, double y1, double x2, double y2, double moment, double maxMoment)
    {
        double ratio = Math.Abs(moment) / maxMoment;
        if (!(ratio >= RingCutoff)) return;
        double r = RingMax * Math.Sqrt(Math.Min(ratio, 1));
        double dx = x2 - x1, dy = y2 - y1, len = Math.Sqrt(dx * dx + dy * dy);
        double shift = len > 0 ? Math.Min(r + 2, len / 3) / len : 0;
        svg.Raw($"<circle class=\"moment-ring\" cx=\"{SvgWriter.F(x1 + shift * dx)}\" cy=\"{SvgWriter.F(y1 + shift * dy)}\" r=\"{SvgWriter.F(r)}\" fill=\"none\" stroke=\"{Ring}\" stroke-width=\"1.1\"><title>|M| = {SvgWriter.Escape(moment.ToString("G4", System.Globalization.CultureInfo.InvariantCulture))}</title></circle>");
    }

    /// <summary>What the frame symbols mean: the member line, the rings and the moment the largest ring stands for.</summary>
    private static void Legend(SvgWriter svg, double x, double y, double maxMoment, string momentUnit)
    {
        svg.Line(x, y - 4, x + 26, y - 4, Compression, 3.6, cls: "legend-frame");
        svg.Line(x, y - 4, x + 26, y - 4, "#ffffff", 1.2, cls: "frame-core");
        svg.Text(x + 32, y, "frame member (beam), colour by axial force", 10.5, cls: "legend");
        svg.Line(x + 290, y - 4, x + 316, y - 4, Compression, 1.6, cls: "legend-bar");
        svg.Text(x + 322, y, "bar", 10.5, cls: "legend");
        svg.Raw($"<circle class=\"legend-ring\" cx=\"{SvgWriter.F(x + 372)}\" cy=\"{SvgWriter.F(y - 4)}\" r=\"{SvgWriter.F(RingMax)}\" fill=\"none\" stroke=\"{Ring}\" stroke-width=\"1.1\"/>");
        string largest = maxMoment > 0 ? $"{maxMoment:G4} {momentUnit}" : "none";
        svg.Text(x + 384, y, $"ring area ∝ end bending moment |M| = √(My² + Mz²); largest ring {largest}", 10.5, cls: "legend");
    }
}
