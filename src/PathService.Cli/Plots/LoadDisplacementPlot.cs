namespace PathService.Cli.Plots;

/// <summary>One point of a load-displacement curve.</summary>
internal readonly record struct CurvePoint(double Displacement, double LoadFactor, bool Stable);

/// <summary>A critical point to mark on the curve.</summary>
internal sealed record CurveMarker(double Displacement, double LoadFactor, string Kind, string Label);

/// <summary>A member event (first yield, slackening, ...) to mark on the curve.</summary>
internal sealed record CurveInput(string Title, string DisplacementLabel, string LoadLabel, IReadOnlyList<CurvePoint> Points,
    IReadOnlyList<CurveMarker> Markers, string Caution);

/// <summary>
/// Renders the equilibrium path as SVG: load factor against a monitored displacement, stable stretches solid,
/// unstable stretches dashed in another colour, limit points as diamonds and bifurcations as triangles.
/// </summary>
internal static class LoadDisplacementPlot
{
    private const double W = 820, H = 560, Left = 90, Right = 200, Top = 50, Bottom = 80;
    private const string StableColour = "#1b5e8c", UnstableColour = "#c2571a", LimitColour = "#8b1c62", BifurcationColour = "#2f7d32";

    public static string Render(CurveInput input)
    {
        var svg = new SvgWriter(W, H, input.Title);
        var pts = input.Points.Where(p => double.IsFinite(p.Displacement) && double.IsFinite(p.LoadFactor)).ToList();
        var xs = pts.Select(p => p.Displacement).Concat(input.Markers.Select(m => m.Displacement)).DefaultIfEmpty(0).ToList();
        var ys = pts.Select(p => p.LoadFactor).Concat(input.Markers.Select(m => m.LoadFactor)).Append(0).ToList();
        var (x0, x1, dx) = NiceScale.For(xs.Min(), xs.Max());
        var (y0, y1, dy) = NiceScale.For(ys.Min(), ys.Max());
        double pw = W - Left - Right, ph = H - Top - Bottom;
        double X(double v) => Left + (v - x0) / (x1 - x0) * pw;
        double Y(double v) => Top + ph - (v - y0) / (y1 - y0) * ph;

        svg.Text(Left, 28, input.Title, 16, cls: "title");
        // Grid and ticks.
        for (double v = x0; v <= x1 + dx * 1e-9; v += dx)
        {
            svg.Line(X(v), Top, X(v), Top + ph, "#e4e4e4");
            svg.Text(X(v), Top + ph + 18, NiceScale.Label(v, dx), 11, "middle", "tick");
        }
        for (double v = y0; v <= y1 + dy * 1e-9; v += dy)
        {
            svg.Line(Left, Y(v), Left + pw, Y(v), "#e4e4e4");
            svg.Text(Left - 8, Y(v) + 4, NiceScale.Label(v, dy), 11, "end", "tick");
        }
        svg.Line(Left, Top + ph, Left + pw, Top + ph, "#444444", 1.2, cls: "axis");
        svg.Line(Left, Top, Left, Top + ph, "#444444", 1.2, cls: "axis");
        if (y0 < 0 && y1 > 0) svg.Line(Left, Y(0), Left + pw, Y(0), "#999999", 1, "2,3");
        svg.Text(Left + pw / 2, H - 30, input.DisplacementLabel, 13, "middle", "axis-label");
        svg.Text(24, Top + ph / 2, input.LoadLabel, 13, "middle", "axis-label", -90);

        // The path, split into runs of equal stability so each run gets its own style.
        int i = 0;
        while (i < pts.Count)
        {
            int j = i;
            while (j + 1 < pts.Count && pts[j + 1].Stable == pts[i].Stable) j++;
            var run = pts.Skip(i).Take(j - i + 1).Select(p => (X(p.Displacement), Y(p.LoadFactor))).ToList();
            // Join to the next run's first point so the curve has no gap.
            if (j + 1 < pts.Count) run.Add((X(pts[j + 1].Displacement), Y(pts[j + 1].LoadFactor)));
            bool stable = pts[i].Stable;
            svg.Polyline(run, stable ? StableColour : UnstableColour, 2.2, stable ? null : "7,4", stable ? "curve curve-stable" : "curve curve-unstable");
            i = j + 1;
        }
        foreach (var p in pts)
            svg.Raw($"<circle class=\"path-point\" cx=\"{SvgWriter.F(X(p.Displacement))}\" cy=\"{SvgWriter.F(Y(p.LoadFactor))}\" r=\"2\" fill=\"{(p.Stable ? StableColour : UnstableColour)}\"/>");

        var placed = new List<(double X, double Y, double W)>();
        foreach (var m in input.Markers)
        {
            double cx = X(m.Displacement), cy = Y(m.LoadFactor);
            if (m.Kind.StartsWith("member-", StringComparison.Ordinal))
            {
                // Member events: a small square outline, labelled only through its tooltip (there can be many).
                svg.Raw($"<rect class=\"member-event {m.Kind}\" x=\"{SvgWriter.F(cx - 4)}\" y=\"{SvgWriter.F(cy - 4)}\" width=\"8\" height=\"8\" fill=\"none\" stroke=\"#444444\" stroke-width=\"1.4\"><title>{SvgWriter.Escape(m.Label)}</title></rect>");
                continue;
            }
            string shape = m.Kind == "limit"
                ? $"<polygon class=\"critical-point critical-limit\" points=\"{SvgWriter.F(cx)},{SvgWriter.F(cy - 8)} {SvgWriter.F(cx + 8)},{SvgWriter.F(cy)} {SvgWriter.F(cx)},{SvgWriter.F(cy + 8)} {SvgWriter.F(cx - 8)},{SvgWriter.F(cy)}\" fill=\"{LimitColour}\" stroke=\"#ffffff\"><title>{SvgWriter.Escape(m.Label)}</title></polygon>"
                : $"<polygon class=\"critical-point critical-bifurcation\" points=\"{SvgWriter.F(cx)},{SvgWriter.F(cy - 9)} {SvgWriter.F(cx + 8)},{SvgWriter.F(cy + 6)} {SvgWriter.F(cx - 8)},{SvgWriter.F(cy + 6)}\" fill=\"{BifurcationColour}\" stroke=\"#ffffff\"><title>{SvgWriter.Escape(m.Label)}</title></polygon>";
            svg.Raw(shape);
            // Labels that would overlap an earlier one move down a line, or are left to the marker's tooltip.
            double w = 5.6 * m.Label.Length, ty = cy - 8;
            for (int tries = 0; tries < 4 && placed.Any(p => Math.Abs(p.Y - ty) < 12 && cx + 10 < p.X + p.W && p.X < cx + 10 + w); tries++) ty += 12;
            if (!placed.Any(p => Math.Abs(p.Y - ty) < 12 && cx + 10 < p.X + p.W && p.X < cx + 10 + w))
            {
                svg.Text(cx + 10, ty, m.Label, 10, cls: "critical-label");
                placed.Add((cx + 10, ty, w));
            }
        }

        // Legend.
        double lx = W - Right + 20, ly = Top + 10;
        svg.Line(lx, ly, lx + 30, ly, StableColour, 2.2, cls: "legend");
        svg.Text(lx + 38, ly + 4, "stable", 12);
        svg.Line(lx, ly + 22, lx + 30, ly + 22, UnstableColour, 2.2, "7,4", "legend");
        svg.Text(lx + 38, ly + 26, "unstable", 12);
        svg.Raw($"<polygon points=\"{SvgWriter.F(lx + 15)},{SvgWriter.F(ly + 36)} {SvgWriter.F(lx + 23)},{SvgWriter.F(ly + 44)} {SvgWriter.F(lx + 15)},{SvgWriter.F(ly + 52)} {SvgWriter.F(lx + 7)},{SvgWriter.F(ly + 44)}\" fill=\"{LimitColour}\"/>");
        svg.Text(lx + 38, ly + 48, "limit point", 12);
        svg.Raw($"<polygon points=\"{SvgWriter.F(lx + 15)},{SvgWriter.F(ly + 57)} {SvgWriter.F(lx + 23)},{SvgWriter.F(ly + 72)} {SvgWriter.F(lx + 7)},{SvgWriter.F(ly + 72)}\" fill=\"{BifurcationColour}\"/>");
        svg.Text(lx + 38, ly + 70, "bifurcation", 12);
        if (input.Markers.Any(m => m.Kind.StartsWith("member-", StringComparison.Ordinal)))
        {
            svg.Raw($"<rect x=\"{SvgWriter.F(lx + 11)}\" y=\"{SvgWriter.F(ly + 84)}\" width=\"8\" height=\"8\" fill=\"none\" stroke=\"#444444\" stroke-width=\"1.4\"/>");
            svg.Text(lx + 38, ly + 92, "member event", 12);
        }
        svg.Text(20, H - 8, input.Caution, 8.5, cls: "caution", fill: "#666666");
        return svg.ToString();
    }
}
