using PathService.Contracts.V1;
using PathService.Ifc.Mapping;

namespace PathService.Ifc.Tests;

/// <summary>
/// The hand-written IFC4 file Files/canopy-mm-kn.ifc: a placement hierarchy (site moved, storey raised and turned
/// 90° about z), units mm and kN with moduli in N/mm², one profile of each kind, a member split at an intermediate
/// connection, a spring bearing, local-axis loads, and the things the mapper must report. Expected values are worked
/// by hand in the comments (a storey point (a, b, c) mm lies at (1000 − b, 2000 + a, 3000 + c) mm globally).
/// </summary>
public class HandWrittenFileTests
{
    private static IfcImportResult Read(string? constant = "dead") =>
        IfcImport.Read(File.OpenRead(IfcText.FilePath("canopy-mm-kn.ifc")),
            new IfcImportOptions { ReferenceLoadGroup = "snow", ConstantLoadGroup = constant });

    [Fact]
    public void Connections_are_placed_through_the_placement_hierarchy_in_metres()
    {
        var r = Read();
        var expected = new Dictionary<string, (double, double, double)>
        {
            ["N1"] = (1, 2, 3), ["N2"] = (1, 8, 3), ["N3"] = (-3, 8, 3), ["N4"] = (-3, 2, 3), ["N5"] = (-1, 5, 4.2), ["N6"] = (1, 5, 3),
        };
        Assert.Equal(expected.Keys.Order(), r.Model.Nodes.Select(n => n.Id).Order());
        foreach (var n in r.Model.Nodes)
        {
            var (x, y, z) = expected[n.Id];
            Assert.Equal(x, n.X, 1e-12);
            Assert.Equal(y, n.Y, 1e-12);
            Assert.Equal(z, n.Z, 1e-12);
        }
        Assert.Equal(("kN", "m"), (r.Model.Units.Force, r.Model.Units.Length));
        Assert.Equal("canopy", r.Model.Name);
    }

    [Fact]
    public void Each_profile_kind_gives_its_area_and_the_modulus_is_converted_from_newton_per_square_millimetre()
    {
        var bars = Read().Model.Bars.ToDictionary(b => b.Id);
        // π(50² − 46²) mm², 100·60 − 90·50 mm², 2·100·8.5 + 183·5.6 mm², stated 800 mm²; × 1e-6 to m².
        Assert.Equal(384 * Math.PI * 1e-6, bars["B1"].Area, 1e-15);
        Assert.Equal(384 * Math.PI * 1e-6, bars["B2"].Area, 1e-15);
        Assert.Equal(1500e-6, bars["B3"].Area, 1e-15);
        Assert.Equal(2724.8e-6, bars["B4"].Area, 1e-15);
        Assert.Equal(800e-6, bars["B5.1"].Area, 1e-15);
        // 210000 N/mm² = 2.1e8 kN/m².
        Assert.All(bars.Values, b => Assert.Equal(2.1e8, b.ElasticModulus, 1e-6));
    }

    [Fact]
    public void A_member_through_an_intermediate_connection_is_split_there_in_the_edge_direction()
    {
        var r = Read();
        var bars = r.Model.Bars.ToDictionary(b => b.Id);
        // B5's edge runs from N2 to N1 and passes N6.
        Assert.Equal(("N2", "N6"), (bars["B5.1"].StartNode, bars["B5.1"].EndNode));
        Assert.Equal(("N6", "N1"), (bars["B5.2"].StartNode, bars["B5.2"].EndNode));
        Assert.False(bars.ContainsKey("B5"));
        Assert.Equal(BarBehavior.TensionOnly, bars["B5.2"].Behavior);
        Assert.Contains(r.Findings, f => f.Code == "MEMBER_SPLIT" && f.Field == "ifc #145" && f.ItemId == "B5");
        Assert.Equal(7, r.Model.Bars.Count);
    }

    [Fact]
    public void Boundary_conditions_become_supports_and_a_spring_in_kilonewton_per_metre()
    {
        var r = Read();
        var supports = r.Model.Supports.Select(s => $"{s.Node}{s.Direction}").ToHashSet();
        Assert.Equal(["N1X", "N1Y", "N1Z", "N2Y", "N2Z", "N3X", "N3Y", "N3Z", "N4X", "N4Y", "N4Z"], supports.Order());
        var spring = Assert.Single(r.Model.GroundSprings);
        // 50 kN/mm, the file assigns no stiffness unit so kN/mm is derived: 5e4 kN/m.
        Assert.Equal(("N2-kx", "N2", Direction.X), (spring.Id, spring.Node, spring.Direction));
        Assert.Equal(5e4, spring.Stiffness, 1e-9);
        Assert.Contains(r.Findings, f => f.Code == "UNIT_ASSUMED" && f.Message.Contains("LINEARSTIFFNESSUNIT") && f.Message.Contains("kN/mm"));
    }

    [Fact]
    public void Load_groups_become_the_reference_and_the_constant_load_with_local_forces_turned_to_global()
    {
        var r = Read();
        var reference = Assert.Single(r.LoadCase.Reference);
        Assert.Equal(("N5", 0.0, 0.0, -20.0), (reference.Node, reference.Fx, reference.Fy, reference.Fz));
        Assert.Equal(2, r.LoadCase.Constant.Count);
        Assert.Equal(("N5", -5.0), (r.LoadCase.Constant[0].Node, r.LoadCase.Constant[0].Fz));
        // 1 kN along N6's local x, which is the storey's x = global y.
        var side = r.LoadCase.Constant[1];
        Assert.Equal("N6", side.Node);
        Assert.Equal(0, side.Fx, 1e-15);
        Assert.Equal(1, side.Fy, 1e-15);
        Assert.Equal(0, side.Fz, 1e-15);
        Assert.Empty(Read(constant: null).LoadCase.Constant);
    }

    [Fact]
    public void What_a_pin_jointed_model_cannot_hold_is_reported_with_the_entity_number()
    {
        var r = Read();
        var codes = r.Findings.Select(f => (f.Code, f.Field)).ToHashSet();
        Assert.Contains(("ROTATIONAL_RESTRAINT_IGNORED", "ifc #33"), codes);
        Assert.Contains(("FILLET_RADII_IGNORED", "ifc #111"), codes);
        Assert.Contains(("FILLET_RADII_IGNORED", "ifc #112"), codes);
        Assert.Contains(("RIGID_JOINTS_IGNORED", "ifc #144"), codes);
        Assert.Contains(("ECCENTRICITY_IGNORED", "ifc #182"), codes);
        Assert.Contains(("CURVED_MEMBER", "ifc #146"), codes);
        // The supports sit on the turned storey placement while the file has no shared analysis placement.
        Assert.Contains(("CONDITION_AXES_ASSUMED", "ifc #34"), codes);
        Assert.All(r.Findings, f => Assert.Equal(FindingSeverity.Warning, f.Severity));
        // The rotational restraints set to IFCBOOLEAN(.F.) on #53 are free and not reported.
        Assert.DoesNotContain(("ROTATIONAL_RESTRAINT_IGNORED", "ifc #53"), codes);
    }

    [Fact]
    public void The_units_note_states_each_conversion_factor()
    {
        var note = Read().UnitsNote;
        Assert.Contains("to kN and m", note);
        Assert.Contains("length mm (#1) × 0.001", note);
        Assert.Contains("force kN (#2) × 1", note);
        Assert.Contains("modulus N·mm^-2 (#6) × 1000", note);
        Assert.Contains("area mm² (#7) × 1E-06", note);
    }

    [Fact]
    public void Asking_for_millimetres_and_newtons_converts_the_same_file_accordingly()
    {
        var r = IfcImport.Read(File.OpenRead(IfcText.FilePath("canopy-mm-kn.ifc")),
            new IfcImportOptions { ReferenceLoadGroup = "snow", ForceUnit = "N", LengthUnit = "mm" });
        var n5 = r.Model.Nodes.Single(n => n.Id == "N5");
        Assert.Equal((-1000.0, 5000.0, 4200.0), (n5.X, n5.Y, n5.Z));
        Assert.Equal(210000, r.Model.Bars[0].ElasticModulus, 1e-9);
        Assert.Equal(1500, r.Model.Bars.Single(b => b.Id == "B3").Area, 1e-9);
        Assert.Equal(-20000, r.LoadCase.Reference[0].Fz, 1e-9);
        Assert.Equal(50000, r.Model.GroundSprings[0].Stiffness, 1e-9);
    }

    [Fact]
    public void Two_loaded_groups_without_a_choice_give_an_error_finding_naming_them()
    {
        var r = IfcImport.Read(File.OpenRead(IfcText.FilePath("canopy-mm-kn.ifc")));
        var f = Assert.Single(r.Findings, f => f.Code == "LOAD_GROUP_NOT_CHOSEN");
        Assert.Equal(FindingSeverity.Error, f.Severity);
        Assert.Contains("'snow'", f.Message);
        Assert.Contains("'dead'", f.Message);
        Assert.Empty(r.LoadCase.Reference);
    }
}
