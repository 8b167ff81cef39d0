using System.Xml.Linq;
using PathService.Cli.Output;
using PathService.Contracts.V1;

namespace PathService.Cli.Tests;

/// <summary>
/// The deformed-shape picture of a frame draws its members apart from bars (hollow double lines) through the
/// intermediate nodes of subdivided beams, marks the end moments with rings sized by |M|, and has a legend; the beam
/// end-force table lists every element end.
/// </summary>
public class FramePictureTests
{
    private static Beam Tube(string id, string a, string b, double ox, double oz) => new()
    {
        Id = id, StartNode = a, EndNode = b, ElasticModulus = 2.1e8, ShearModulus = 8.1e7, Area = 1.7e-3,
        SecondMomentY = 2.6e-6, SecondMomentZ = 2.6e-6, TorsionConstant = 5.2e-6, Orientation = new OrientationVector { X = ox, Z = oz },
    };

    /// <summary>A portal frame with a girder in 3 elements, bowed 0.3 m upwards, and one bracing bar.</summary>
    private static TracePathRequest Portal()
    {
        var m = new StructureModel { Name = "portal", Units = new UnitLabels { Force = "kN", Length = "m" } };
        m.Nodes.Add(new Node { Id = "a" });
        m.Nodes.Add(new Node { Id = "b", Z = 3 });
        m.Nodes.Add(new Node { Id = "c", X = 6, Z = 3 });
        m.Nodes.Add(new Node { Id = "d", X = 6 });
        m.Beams.Add(Tube("col-L", "a", "b", 1, 0));
        var girder = Tube("girder", "b", "c", 0, 1);
        girder.Subdivisions = 3;
        girder.BowAmplitude = 0.3;
        m.Beams.Add(girder);
        m.Beams.Add(Tube("col-R", "d", "c", 1, 0));
        m.Bars.Add(new Bar { Id = "brace", StartNode = "a", EndNode = "c", ElasticModulus = 2.1e8, Area = 1e-3 });
        return new TracePathRequest { Model = m, LoadCase = new LoadCase { Reference = { new NodalLoad { Node = "b", Fz = -10 } } } };
    }

    private static BeamElementState Element(string element, string beam, double n, double m1, double m2) => new()
    {
        Element = element, Beam = beam,
        Start = new BeamEndForces { AxialForce = n, MomentY = m1, MomentZ = 0 },
        End = new BeamEndForces { AxialForce = n, MomentY = 0, MomentZ = m2 },
    };

    /// <summary>A recorded point whose state has every node (the generated ones too) and every beam element.</summary>
    private static PathRecorder Recorded()
    {
        var state = new StructureState();
        foreach (var id in new[] { "a", "b", "c", "d", "girder#1", "girder#2" })
            state.Nodes.Add(new NodeState { Node = id, Uz = id.StartsWith("girder") ? -0.05 : id is "b" or "c" ? -0.01 : 0 });
        state.Bars.Add(new BarState { Bar = "brace", AxialForce = 3 });
        state.BeamElements.Add(Element("col-L", "col-L", -12, 8, 0));
        state.BeamElements.Add(Element("girder/1", "girder", 4, -8, 2));
        state.BeamElements.Add(Element("girder/2", "girder", 4, 2, 0.1));  // 0.1 is under 10 % of 8: no ring
        state.BeamElements.Add(Element("girder/3", "girder", 4, 0, -6));
        state.BeamElements.Add(Element("col-R", "col-R", -9, 0, 6));
        var rec = new PathRecorder();
        rec.Add(new TracePathResponse { Point = new PathPoint { Index = 3, LoadFactor = 1.25, State = state } });
        return rec;
    }

    [Fact]
    public void Frame_members_are_drawn_apart_from_bars_with_rings_sized_by_the_end_moments_and_a_legend()
    {
        var svg = XDocument.Parse(Pictures.Shape(Portal(), Recorded(), null, null)!);
        var byClass = svg.Descendants().GroupBy(e => (string?)e.Attribute("class") ?? "").ToDictionary(g => g.Key, g => g.ToList());
        // Two views, 5 beam elements each (the girder through its 2 intermediate nodes), 1 bar each.
        Assert.Equal(10, byClass["frame-deformed"].Count);
        Assert.Equal(10, byClass["frame-undeformed"].Count);
        Assert.Equal(2, byClass["bar-deformed"].Count);
        Assert.All(byClass["frame-deformed"], l => Assert.Equal("3.6", (string)l.Attribute("stroke-width")!));
        Assert.All(byClass["bar-deformed"], l => Assert.Equal("1.6", (string)l.Attribute("stroke-width")!));
        // Compressed columns red, the tensioned girder blue, as the bars.
        Assert.Equal(4, byClass["frame-deformed"].Count(l => (string)l.Attribute("stroke")! == "#b3261e"));
        // Rings: |M| = 8, 2 and 6 at two ends each per view; 0 and 0.1 (< 10 % of 8) get none.
        var rings = byClass["moment-ring"];
        Assert.Equal(12, rings.Count);
        double Radius(XElement e) => double.Parse((string)e.Attribute("r")!, System.Globalization.CultureInfo.InvariantCulture);
        var radii = rings.Select(Radius).Distinct().OrderBy(r => r).ToList();
        // Area ∝ |M|: radii 7·√(2/8), 7·√(6/8), 7 (rounded to 3 decimals by the writer).
        Assert.Equal([3.5, 6.062, 7.0], radii);
        var legend = string.Join(" | ", byClass["legend"].Select(e => e.Value));
        Assert.Contains("frame member", legend);
        Assert.Contains("largest ring 8 kN·m", legend);
        Assert.Contains(byClass["caution"], e => e.Value.Contains("qualified engineer"));
    }

    [Fact]
    public void The_intermediate_nodes_of_a_subdivided_beam_lie_on_its_bowed_chord()
    {
        var geometry = new FrameGeometry(Portal().Model);
        Assert.Equal(["a", "b", "c", "d", "girder#1", "girder#2"], geometry.NodeIds);
        // Girder from (0, 0, 3) to (6, 0, 3), local y = +z (orientation), bow 0.3·sin(πk/3) at x = 2 and 4.
        double bow = 0.3 * Math.Sin(Math.PI / 3);
        double[] expected = [2, 0, 3 + bow, 4, 0, 3 + bow];
        for (int k = 0; k < 6; k++) Assert.Equal(expected[k], geometry.Coordinates[12 + k], 1e-12); // rounding of a few ulps
        Assert.Equal([("col-L", 0, 1), ("girder/1", 1, 4), ("girder/2", 4, 5), ("girder/3", 5, 2), ("col-R", 3, 2)],
            geometry.Elements.Select(e => (e.Element, e.Start, e.End)));
    }

    [Fact]
    public void A_bar_only_picture_has_no_frame_symbols_and_no_legend()
    {
        var request = Portal();
        request.Model.Beams.Clear();
        var rec = new PathRecorder();
        var state = new StructureState();
        state.Bars.Add(new BarState { Bar = "brace", AxialForce = 1 });
        rec.Add(new TracePathResponse { Point = new PathPoint { Index = 0, State = state } });
        string svg = Pictures.Shape(request, rec, null, null)!;
        Assert.DoesNotContain("frame-", svg);
        Assert.DoesNotContain("moment-ring", svg);
        Assert.DoesNotContain("class=\"legend\"", svg);
    }

    [Fact]
    public void The_beam_force_table_has_one_row_per_element_end_in_the_request_units()
    {
        var csv = Recorded().BeamForcesCsv("kN", "m")!.TrimEnd().Split('\n');
        Assert.Equal("state,number,branch,load_factor,element,beam,end,axial_force [kN],shear_y [kN],shear_z [kN],torsion [kN·m],moment_y [kN·m],moment_z [kN·m]", csv[0]);
        Assert.Equal(1 + 10, csv.Length);
        Assert.Equal("point,3,0,1.25,girder/1,girder,start,4,0,0,0,-8,0", csv[3]);
        Assert.Equal("point,3,0,1.25,girder/1,girder,end,4,0,0,0,0,2", csv[4]);
        Assert.Null(new PathRecorder().BeamForcesCsv("kN", "m"));
    }
}
