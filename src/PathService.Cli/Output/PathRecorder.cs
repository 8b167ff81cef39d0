using System.Globalization;
using System.Text;
using Google.Protobuf;
using PathService.Client;
using PathService.Contracts.V1;

namespace PathService.Cli.Output;

/// <summary>Collects a streamed trace and writes it as CSV, JSON lines and a summary JSON.</summary>
internal sealed class PathRecorder
{
    public List<PathPoint> Points { get; } = [];
    public List<CriticalPoint> Criticals { get; } = [];
    public List<StepCut> Cuts { get; } = [];
    public List<MemberEvent> MemberEvents { get; } = [];
    public List<DisplacementTurn> Turns { get; } = [];
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
            case TracePathResponse.UpdateOneofCase.DisplacementTurn: Turns.Add(r.DisplacementTurn); break;
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
                Labels.Of(p.Stability)]);
            sb.AppendLine(string.Join(',', cells));
        }
        return sb.ToString();
    }

    /// <summary>
    /// Critical points and displacement turns as one CSV table, in stream order of kind: one row per event with its
    /// load factor, bracket, counts, multiplicity, location (located, estimated relative error, note) and load alignment.
    /// </summary>
    public string EventsCsv()
    {
        var sb = new StringBuilder();
        sb.AppendLine("event,sequence,branch,kind,load_factor,point_before,point_after,negative_pivots_before,negative_pivots_after,multiplicity,located,estimated_error,load_alignment,component,value,note");
        foreach (var c in Criticals)
            sb.AppendLine(string.Join(',', "critical_point", I(c.Sequence), I(c.Branch), Labels.Of(c.Kind),
                F(c.LoadFactor), I(c.PointBefore), I(c.PointAfter), I(c.NegativePivotsBefore), I(c.NegativePivotsAfter), I(Math.Max(1, c.Multiplicity)),
                c.Located ? "true" : "false", F(c.Tolerance), F(c.LoadAlignment), "", "", Quote(c.LocationNote)));
        foreach (var t in Turns)
            sb.AppendLine(string.Join(',', "displacement_turn", I(t.Sequence), I(t.Branch), "turn", F(t.LoadFactor), I(t.PointBefore), I(t.PointAfter), "", "", "", "", "", "",
                t.Component is null ? "" : $"{t.Component.Node}.{Axis(t.Component.Direction)}", t.Component is null ? "" : F(t.Component.Value), ""));
        return sb.ToString();
    }

    private static string I(int v) => v.ToString(CultureInfo.InvariantCulture);
    private static string Quote(string s) => s.Length == 0 ? "" : "\"" + s.Replace("\"", "\"\"") + "\"";

    /// <summary>
    /// Design sensitivities of every critical point that carries them, one row per parameter: the critical point,
    /// its λ_cr and kind, the item (bar, node, ground or link spring), the parameter and dλ_cr per unit of it, with the
    /// unit of that derivative in the request's labels. Null when no critical point carries sensitivities.
    /// </summary>
    public string? SensitivityCsv(string force, string length)
    {
        var with = Criticals.Where(c => c.Sensitivity is { Defined: true }).ToList();
        if (with.Count == 0) return null;
        var sb = new StringBuilder();
        sb.AppendLine("critical_point,load_factor,kind,item_kind,item,parameter,derivative,unit,breaks_bifurcation");
        foreach (var c in with)
        {
            string head = $"{I(c.Sequence)},{F(c.LoadFactor)},{Labels.Of(c.Kind)}";
            void Row(string kind, string item, string parameter, double d, string unit, bool breaks) =>
                sb.AppendLine($"{head},{kind},{Cell(item)},{parameter},{F(d)},{unit},{(breaks ? "true" : "false")}");
            var s = c.Sensitivity;
            foreach (var b in s.Bars)
            {
                Row("bar", b.Bar, "area", b.Area, $"1/{length}²", b.BreaksBifurcation);
                Row("bar", b.Bar, "elastic_modulus", b.ElasticModulus, $"{length}²/{force}", b.BreaksBifurcation);
                Row("bar", b.Bar, "volume", b.Volume, $"1/{length}³", b.BreaksBifurcation);
            }
            foreach (var n in s.Nodes)
            {
                Row("node", n.Node, "x", n.X, $"1/{length}", n.BreaksBifurcationAlong.Contains('x'));
                Row("node", n.Node, "y", n.Y, $"1/{length}", n.BreaksBifurcationAlong.Contains('y'));
                Row("node", n.Node, "z", n.Z, $"1/{length}", n.BreaksBifurcationAlong.Contains('z'));
            }
            foreach (var g in s.GroundSprings) Row("ground_spring", g.Spring, "stiffness", g.Stiffness, $"{length}/{force}", g.BreaksBifurcation);
            foreach (var l in s.LinkSprings) Row("link_spring", l.Spring, "stiffness", l.Stiffness, $"{length}/{force}", l.BreaksBifurcation);
        }
        return sb.ToString();
    }

    /// <summary>
    /// End forces of every beam element in every full state of the trace (path points, then critical points), one row
    /// per element end: where the state was taken, the element and its beam, which end, and N, V_y, V_z, T, M_y, M_z in
    /// the element's local axes, in the request's units. Null when no state carries beam elements.
    /// </summary>
    public string? BeamForcesCsv(string force, string length)
    {
        var states = Points.Where(p => p.State is { BeamElements.Count: > 0 }).Select(p => (Where: "point", Number: p.Index, p.Branch, p.LoadFactor, p.State))
            .Concat(Criticals.Where(c => c.State is { BeamElements.Count: > 0 }).Select(c => (Where: "critical_point", Number: c.Sequence, c.Branch, c.LoadFactor, c.State)))
            .ToList();
        if (states.Count == 0) return null;
        var sb = new StringBuilder();
        string moment = $"{force}·{length}";
        sb.AppendLine($"state,number,branch,load_factor,element,beam,end,axial_force [{force}],shear_y [{force}],shear_z [{force}],torsion [{moment}],moment_y [{moment}],moment_z [{moment}]");
        foreach (var (where, number, branch, lambda, state) in states)
            foreach (var e in state.BeamElements)
                foreach (var (end, f) in new[] { ("start", e.Start), ("end", e.End) })
                {
                    if (f is null) continue;
                    sb.AppendLine(string.Join(',', where, I(number), I(branch), F(lambda), Cell(e.Element), Cell(e.Beam), end,
                        F(f.AxialForce), F(f.ShearY), F(f.ShearZ), F(f.Torsion), F(f.MomentY), F(f.MomentZ)));
                }
        return sb.ToString();
    }

    /// <summary>A caller's id as a CSV cell (quoted when it holds a comma, quote or line break).</summary>
    private static string Cell(string s) => s.IndexOfAny([',', '"', '\n', '\r']) < 0 ? s : "\"" + s.Replace("\"", "\"\"") + "\"";

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
    private static CriticalPoint Strip(CriticalPoint c) { var copy = c.Clone(); copy.State = null; copy.Mode.Clear(); copy.AdditionalModes.Clear(); return copy; }

    /// <summary>The axis of a component as people read it: the contract label of its direction (x, y, z).</summary>
    public static string Axis(Direction d) => Labels.Of(d);
    public static string F(double v) => v.ToString("R", CultureInfo.InvariantCulture);
}
