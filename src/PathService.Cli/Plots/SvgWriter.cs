using System.Globalization;
using System.Text;

namespace PathService.Cli.Plots;

/// <summary>Minimal SVG builder with invariant-culture number formatting and XML escaping.</summary>
internal sealed class SvgWriter
{
    private readonly StringBuilder _sb = new();

    public SvgWriter(double width, double height, string title)
    {
        _sb.Append($"<svg xmlns=\"http://www.w3.org/2000/svg\" width=\"{F(width)}\" height=\"{F(height)}\" viewBox=\"0 0 {F(width)} {F(height)}\" font-family=\"sans-serif\">\n");
        _sb.Append($"<title>{Escape(title)}</title>\n");
        _sb.Append($"<rect width=\"100%\" height=\"100%\" fill=\"#ffffff\"/>\n");
    }

    public static string F(double v) => v.ToString("0.###", CultureInfo.InvariantCulture);

    public static string Escape(string s) => s.Replace("&", "&amp;").Replace("<", "&lt;").Replace(">", "&gt;").Replace("\"", "&quot;");

    public void Raw(string element) => _sb.Append(element).Append('\n');

    public void Line(double x1, double y1, double x2, double y2, string stroke, double width = 1, string? dash = null, string? cls = null) =>
        Raw($"<line{Class(cls)} x1=\"{F(x1)}\" y1=\"{F(y1)}\" x2=\"{F(x2)}\" y2=\"{F(y2)}\" stroke=\"{stroke}\" stroke-width=\"{F(width)}\"{Dash(dash)}/>");

    public void Polyline(IEnumerable<(double X, double Y)> points, string stroke, double width, string? dash, string cls) =>
        Raw($"<polyline class=\"{cls}\" fill=\"none\" stroke=\"{stroke}\" stroke-width=\"{F(width)}\"{Dash(dash)} points=\"{string.Join(' ', points.Select(p => $"{F(p.X)},{F(p.Y)}"))}\"/>");

    public void Text(double x, double y, string text, double size = 12, string anchor = "start", string? cls = null, double rotate = 0, string fill = "#222222") =>
        Raw($"<text{Class(cls)} x=\"{F(x)}\" y=\"{F(y)}\" font-size=\"{F(size)}\" text-anchor=\"{anchor}\" fill=\"{fill}\"{(rotate != 0 ? $" transform=\"rotate({F(rotate)} {F(x)} {F(y)})\"" : "")}>{Escape(text)}</text>");

    public override string ToString() => _sb + "</svg>\n";

    private static string Class(string? cls) => cls is null ? "" : $" class=\"{cls}\"";
    private static string Dash(string? dash) => dash is null ? "" : $" stroke-dasharray=\"{dash}\"";
}

/// <summary>Axis ticks at "nice" steps of 1, 2 or 5 × 10ⁿ (P. S. Heckbert, "Nice numbers for graph labels", Graphics Gems, 1990).</summary>
internal static class NiceScale
{
    public static (double Min, double Max, double Step) For(double min, double max, int targetTicks = 6)
    {
        if (!(max > min)) { double pad = Math.Abs(min) > 0 ? Math.Abs(min) * 0.1 : 1; min -= pad; max += pad; }
        double step = Nice((max - min) / Math.Max(1, targetTicks - 1));
        return (Math.Floor(min / step) * step, Math.Ceiling(max / step) * step, step);
    }

    private static double Nice(double x)
    {
        double e = Math.Pow(10, Math.Floor(Math.Log10(x)));
        double f = x / e;
        return (f <= 1 ? 1 : f <= 2 ? 2 : f <= 5 ? 5 : 10) * e;
    }

    public static string Label(double v, double step)
    {
        int decimals = Math.Max(0, (int)-Math.Floor(Math.Log10(step) + 1e-9));
        double r = Math.Round(v, Math.Min(decimals, 12));
        if (Math.Abs(r) < step * 1e-9) r = 0; // no "-0.0"
        return r.ToString("F" + Math.Min(decimals, 12), CultureInfo.InvariantCulture);
    }
}
