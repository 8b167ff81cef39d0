using PathService.Cli.Plots;
using PathService.Client;
using PathService.Contracts.V1;

namespace PathService.Cli.Output;

/// <summary>Builds the SVG pictures of a recorded trace: the load-displacement curve, deformed shapes and the material gain.</summary>
internal static class Pictures
{
    /// <summary>Load factor against monitored displacement number <paramref name="which"/> (0-based).</summary>
    public static string Curve(TracePathRequest request, PathRecorder rec, int which = 0)
    {
        string length = Unit(request.Model?.Units?.Length, "m");
        string force = Unit(request.Model?.Units?.Force, "kN");
        var first = rec.Points.FirstOrDefault(p => p.Monitored.Count > which);
        string dof = first is null ? "(no monitored displacement)" : $"{first.Monitored[which].Node}.{PathRecorder.Axis(first.Monitored[which].Direction)}";
        // Critical points are equilibrium points too: draw the curve through them, between their bracketing points (an
        // unresolved step's entry is not one).
        var points = new List<CurvePoint>();
        foreach (var p in rec.Points.Where(p => p.Monitored.Count > which))
        {
            points.Add(new CurvePoint(p.Monitored[which].Value, p.LoadFactor, p.Stability == Stability.Stable));
            foreach (var c in rec.Criticals.Where(c => c.PointBefore == p.Index && c.Monitored.Count > which && c.Kind != CriticalPointKind.Unresolved))
                points.Add(new CurvePoint(c.Monitored[which].Value, c.LoadFactor, p.Stability == Stability.Stable));
        }
        // An unresolved step's entry is the middle of its chord, not an equilibrium state: listed in the report, not drawn.
        var markers = rec.Criticals.Where(c => c.Monitored.Count > which && c.Kind != CriticalPointKind.Unresolved).Select(c => new CurveMarker(c.Monitored[which].Value, c.LoadFactor,
            c.Kind == CriticalPointKind.LimitPoint ? "limit" : "bifurcation",
            $"{PathService.Client.Labels.Of(c.Kind)} λ = {c.LoadFactor:G5}")).ToList();
        // Member events sit at the point where they were first seen.
        var byIndex = rec.Points.Where(p => p.Monitored.Count > which).GroupBy(p => p.Index).ToDictionary(g => g.Key, g => g.First());
        foreach (var e in rec.MemberEvents)
            if (byIndex.TryGetValue(e.Point, out var at))
                markers.Add(new CurveMarker(at.Monitored[which].Value, e.LoadFactor, $"member-{PathService.Client.Labels.Of(e.Kind)}", $"{e.Bar} {PathService.Client.Labels.Of(e.Kind)}"));
        bool rotation = first is not null && first.Monitored[which].Direction is Direction.RotationX or Direction.RotationY or Direction.RotationZ;
        return LoadDisplacementPlot.Render(new CurveInput(
            $"{Name(request)}: equilibrium path", rotation ? $"rotation {dof} [rad]" : $"displacement {dof} [{length}]", $"load factor λ (reference load in {force})",
            points, markers, Cautions.Short));
    }

    /// <summary>Deformed shape at a point that carries the full state; null when none does.</summary>
    public static string? Shape(TracePathRequest request, PathRecorder rec, int? pointIndex, double? scale)
    {
        var model = request.Model;
        if (model is null) return null;
        var point = pointIndex is { } i ? rec.Points.FirstOrDefault(p => p.Index == i && p.State is not null) : rec.Points.LastOrDefault(p => p.State is not null);
        if (point?.State is null) return null;
        // The model's nodes, then the intermediate nodes of subdivided beams, as the results list them.
        var geometry = new FrameGeometry(model);
        var index = geometry.Index;
        var coords = geometry.Coordinates.ToArray();
        var disp = new double[coords.Length];
        foreach (var ns in point.State.Nodes)
            if (index.TryGetValue(ns.Node, out int k)) { disp[3 * k] = ns.Ux; disp[3 * k + 1] = ns.Uy; disp[3 * k + 2] = ns.Uz; }
        var force = point.State.Bars.ToDictionary(b => b.Bar, b => b.AxialForce);
        var bars = model.Bars.Select(b => (index[b.StartNode], index[b.EndNode])).ToArray();
        var forces = model.Bars.Select(b => force.GetValueOrDefault(b.Id)).ToArray();
        var ends = point.State.BeamElements.GroupBy(e => e.Element).ToDictionary(g => g.Key, g => g.First());
        var frame = geometry.Elements.Select(e => ends.TryGetValue(e.Element, out var st)
            ? new FrameMember(e.Start, e.End, AxialForce(st), Bending(st.Start), Bending(st.End))
            : new FrameMember(e.Start, e.End, 0, 0, 0)).ToArray();
        string length = Unit(model.Units?.Length, "m");
        return DeformedShapePlot.Render(new ShapeInput($"{Name(request)}: deformed shape at point {point.Index}, λ = {point.LoadFactor:G5}",
            length, coords, bars, disp, forces, scale, Cautions.Short, UpAxis(request))
        {
            FrameMembers = frame, MomentUnit = $"{Unit(model.Units?.Force, "kN")}·{length}",
        });
    }

    /// <summary>
    /// Members coloured by dλ_cr/dV at the first critical point whose sensitivities are defined (or the one of sequence
    /// <paramref name="sequence"/>); null when no critical point carries them.
    /// </summary>
    public static string? Sensitivity(TracePathRequest request, PathRecorder rec, int? sequence = null)
    {
        var model = request.Model;
        var cp = rec.Criticals.FirstOrDefault(c => c.Sensitivity is { Defined: true } && (sequence is null || c.Sequence == sequence));
        if (model is null || cp is null) return null;
        var index = model.Nodes.Select((n, k) => (n.Id, k)).ToDictionary(t => t.Id, t => t.k);
        var coords = model.Nodes.SelectMany(n => new[] { n.X, n.Y, n.Z }).ToArray();
        var bars = model.Bars.Select(b => (index[b.StartNode], index[b.EndNode])).ToArray();
        var byBar = cp.Sensitivity.Bars.ToDictionary(b => b.Bar, b => b.Volume);
        var gain = model.Bars.Select(b => byBar.GetValueOrDefault(b.Id)).ToArray();
        string kind = Labels.Of(cp.Kind).Replace('_', ' ');
        return SensitivityPlot.Render(new SensitivityInput($"{Name(request)}: where material raises λ_cr (critical point {cp.Sequence}, {kind}, λ_cr = {cp.LoadFactor:G6})",
            Unit(model.Units?.Length, "m"), coords, bars, model.Bars.Select(b => b.Id).ToArray(), gain, UpAxis(request), Cautions.Short));
    }

    /// <summary>Resultant bending moment √(M_y² + M_z²) at one element end.</summary>
    private static double Bending(BeamEndForces? f) => f is null ? 0 : Math.Sqrt(f.MomentY * f.MomentY + f.MomentZ * f.MomentZ);

    /// <summary>The element's axial force (tension positive), the mean of its two ends (they differ only by the load
    /// carried along the element, none here).</summary>
    private static double AxialForce(BeamElementState e) => ((e.Start?.AxialForce ?? 0) + (e.End?.AxialForce ?? 0)) / 2;

    /// <summary>Up axis from gravity when self-weight is used, else from the resultant of the loads (see DeformedShapePlot.UpAxisOf).</summary>
    private static int UpAxis(TracePathRequest request)
    {
        var loads = request.LoadCase;
        if (loads is null) return 2;
        bool selfWeight = loads.LoadSets.Any(p => p.SelfWeight);
        double[]? gravity = selfWeight && loads.Gravity is { } g ? [g.X, g.Y, g.Z] : null;
        if (selfWeight && loads.Gravity is null) gravity = [0, 0, -9.81]; // the documented default gravity
        var resultant = new double[3];
        foreach (var l in loads.Reference.Concat(loads.Constant).Concat(loads.LoadSets.SelectMany(p => p.Loads)))
        {
            resultant[0] += l.Fx; resultant[1] += l.Fy; resultant[2] += l.Fz;
        }
        return DeformedShapePlot.UpAxisOf(gravity, resultant);
    }

    private static string Name(TracePathRequest r) => string.IsNullOrWhiteSpace(r.Model?.Name) ? "model" : r.Model.Name;
    private static string Unit(string? u, string fallback) => string.IsNullOrWhiteSpace(u) ? fallback : u;
}
