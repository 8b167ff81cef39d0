using System.Globalization;
using System.Text;
using Google.Protobuf;
using PathService.Contracts.V1;

namespace PathService.Cli.Output;

/// <summary>Collects a streamed trace and writes it as CSV, JSON lines and a summary JSON.</summary>
internal sealed class PathRecorder
{
    public List<PathPoint> Points { get; } = [];
    public List<CriticalPoint> Criticals { get; } = [];
    public List<StepCut> Cuts { get; } = [];
    public List<MemberEvent> MemberEvents { get; } = [];
    public PathSummary? Summary { get; private set; }
    private readonly List<string> _jsonLines = [];
    private static readonly JsonFormatter Json = new(JsonFormatter.Settings.Default.WithFormatDefaultValues(true));

    public void Add(TracePathResponse r)
    {
        _jsonLines.Add(Json.Format(r));
        switch (r.UpdateCase)
        {
            case TracePathResponse.UpdateOneofCase.Point: Points.Add(r.Point); break;
            case TracePathResponse.UpdateOneofCase.CriticalPoint: Criticals.Add(r.CriticalPoint); break;
            case TracePathResponse.UpdateOneofCase.StepCut: Cuts.Add(r.StepCut); break;
            case TracePathResponse.UpdateOneofCase.Summary: Summary = r.Summary; break;
            case TracePathResponse.UpdateOneofCase.MemberEvent: MemberEvents.Add(r.MemberEvent); break;
        }
    }

    public string Csv()
    {
        var sb = new StringBuilder();
        var monitored = Points.FirstOrDefault()?.Monitored.Select(m => $"{m.Node}.{Axis(m.Direction)}").ToList() ?? [];
        sb.AppendLine(string.Join(',', new[] { "index", "load_factor", "arc_length" }.Concat(monitored).Concat(["iterations", "residual_norm", "negative_pivots", "stability"])));
        foreach (var p in Points)
        {
            var cells = new List<string> { p.Index.ToString(CultureInfo.InvariantCulture), F(p.LoadFactor), F(p.ArcLength) };
            cells.AddRange(p.Monitored.Select(m => F(m.Value)));
            cells.AddRange([p.Iterations.ToString(CultureInfo.InvariantCulture), F(p.ResidualNorm), p.NegativePivots.ToString(CultureInfo.InvariantCulture),
                p.Stability == Stability.Stable ? "stable" : "unstable"]);
            sb.AppendLine(string.Join(',', cells));
        }
        return sb.ToString();
    }

    public string JsonLines() => string.Join('\n', _jsonLines) + "\n";

    public string SummaryJson()
    {
        var sb = new StringBuilder("{\n");
        sb.Append($"  \"summary\": {(Summary is null ? "null" : Json.Format(Summary))},\n");
        sb.Append($"  \"criticalPoints\": [{string.Join(",", Criticals.Select(c => "\n    " + Json.Format(Strip(c))))}\n  ],\n");
        sb.Append($"  \"caution\": \"{Cautions.Short}\"\n}}\n");
        return sb.ToString();
    }

    /// <summary>The critical point without its full state and mode, which belong in the JSON lines.</summary>
    private static CriticalPoint Strip(CriticalPoint c) { var copy = c.Clone(); copy.State = null; copy.Mode.Clear(); return copy; }

    public static string Axis(Direction d) => d switch { Direction.X => "x", Direction.Y => "y", Direction.Z => "z", _ => "?" };
    public static string F(double v) => v.ToString("R", CultureInfo.InvariantCulture);
}
