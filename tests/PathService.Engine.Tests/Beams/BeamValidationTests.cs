using PathService.Engine.Model;

namespace PathService.Engine.Tests.Beams;

/// <summary>Every new field of beams, rotations and moments has its own finding with field path and item id.</summary>
public class BeamValidationTests
{
    private static ModelDefinition Good() => BeamModels.Cantilever(3.0, 10);

    private static ValidationFinding Single(ModelDefinition def, FindingCode code)
    {
        var findings = ModelValidator.Validate(def);
        return Assert.Single(findings, f => f.Code == code);
    }

    private static ModelDefinition WithBeam(Func<BeamDefinition, BeamDefinition> change) => Good() with { Beams = [change(Good().Beams[0])] };

    [Fact]
    public void A_good_cantilever_has_no_findings() => Assert.Empty(ModelValidator.Validate(Good()));

    [Theory]
    [InlineData("elastic_modulus", FindingCode.NonPositiveStiffness)]
    [InlineData("shear_modulus", FindingCode.NonPositiveStiffness)]
    [InlineData("area", FindingCode.NonPositiveArea)]
    [InlineData("second_moment_y", FindingCode.BeamPropertyOutOfRange)]
    [InlineData("second_moment_z", FindingCode.BeamPropertyOutOfRange)]
    [InlineData("torsion_constant", FindingCode.BeamPropertyOutOfRange)]
    public void Non_positive_section_property_names_its_field_and_the_beam(string field, FindingCode code)
    {
        var def = WithBeam(b => field switch
        {
            "elastic_modulus" => b with { ElasticModulus = 0 },
            "shear_modulus" => b with { ShearModulus = -1 },
            "area" => b with { Area = 0 },
            "second_moment_y" => b with { SecondMomentY = -1e-6 },
            "second_moment_z" => b with { SecondMomentZ = 0 },
            _ => b with { TorsionConstant = 0 },
        });
        var f = Single(def, code);
        Assert.Equal($"beams[0].{field}", f.FieldPath);
        Assert.Equal("c", f.ItemId);
    }

    [Fact]
    public void Non_finite_section_property_is_reported()
    {
        var f = Single(WithBeam(b => b with { SecondMomentY = double.NaN }), FindingCode.NonFiniteNumber);
        Assert.Equal("beams[0].second_moment_y", f.FieldPath);
    }

    [Fact]
    public void Orientation_parallel_to_the_member_is_an_error()
    {
        var f = Single(WithBeam(b => b with { Orientation = (-2, 0, 0) }), FindingCode.BeamPropertyOutOfRange);
        Assert.Equal("beams[0].orientation", f.FieldPath);
        Assert.Contains("parallel", f.Message);
    }

    [Fact]
    public void Zero_orientation_and_non_finite_component_are_errors()
    {
        Assert.Equal("beams[0].orientation", Single(WithBeam(b => b with { Orientation = (0, 0, 0) }), FindingCode.BeamPropertyOutOfRange).FieldPath);
        Assert.Equal("beams[0].orientation.z", Single(WithBeam(b => b with { Orientation = (0, 1, double.PositiveInfinity) }), FindingCode.NonFiniteNumber).FieldPath);
    }

    [Theory]
    [InlineData(0)]
    [InlineData(101)]
    public void Subdivisions_outside_1_to_100_are_errors(int n)
    {
        var f = Single(WithBeam(b => b with { Subdivisions = n }), FindingCode.MemberSubdivisionOutOfRange);
        Assert.Equal("beams[0].subdivisions", f.FieldPath);
    }

    [Fact]
    public void Bow_on_an_undivided_member_is_an_error()
    {
        var f = Single(WithBeam(b => b with { BowAmplitude = 0.01 }), FindingCode.MemberSubdivisionOutOfRange);
        Assert.Equal("beams[0].bow_amplitude", f.FieldPath);
        Assert.Empty(ModelValidator.Validate(WithBeam(b => b with { BowAmplitude = 0.01, Subdivisions = 4 })));
    }

    [Fact]
    public void Unknown_bow_plane_is_an_error()
    {
        var f = Single(WithBeam(b => b with { BowPlane = (BowPlane)7 }), FindingCode.UnknownOption);
        Assert.Equal("beams[0].bow_plane", f.FieldPath);
    }

    [Fact]
    public void Generated_node_id_that_is_taken_is_an_error()
    {
        var def = WithBeam(b => b with { Subdivisions = 3 }) with { Nodes = [.. Good().Nodes, new("c#2", 5, 5, 5)] };
        var f = ModelValidator.Validate(def).Single(x => x.Code == FindingCode.MemberSubdivisionOutOfRange);
        Assert.Contains("'c#2'", f.Message);
    }

    [Fact]
    public void Torsion_released_at_both_ends_of_a_subdivided_member_is_an_error()
    {
        var def = WithBeam(b => b with { Subdivisions = 2, StartReleases = new(Torsion: true), EndReleases = new(Torsion: true) });
        Assert.Equal("beams[0].subdivisions", Single(def, FindingCode.MemberSubdivisionOutOfRange).FieldPath);
    }

    [Fact]
    public void Beam_id_equal_to_a_bar_id_is_a_duplicate()
    {
        var def = Good() with { Nodes = [.. Good().Nodes, new("far", 3, 2, 0)], Bars = [new("c", "tip", "far", 2e8, 1e-3)], Supports = [.. Good().Supports, .. TestModels.Pin("far")] };
        var f = Single(def, FindingCode.DuplicateId);
        Assert.Equal("beams[0].id", f.FieldPath);
    }

    [Fact]
    public void Moment_at_a_node_without_rotations_is_an_error()
    {
        var def = TestModels.TwoBarTruss(4, 0.35, 2.4e5, 10) with { Loads = LoadCaseDefinition.ReferenceOnly(new NodalLoad("apex", 0, -10, 0) { Mz = 2 }) };
        var f = Single(def, FindingCode.RotationWithoutRotationalUnknowns);
        Assert.Equal("loads.reference[0].mz", f.FieldPath);
        Assert.Equal("apex", f.ItemId);
    }

    [Fact]
    public void Non_finite_moment_is_reported_with_its_component()
    {
        var def = Good() with { Loads = LoadCaseDefinition.ReferenceOnly(new NodalLoad("tip", 0, 0, -10) { My = double.NaN }) };
        Assert.Equal("loads.reference[0].my", Single(def, FindingCode.NonFiniteNumber).FieldPath);
    }

    [Fact]
    public void Rotational_spring_at_a_node_without_rotations_is_an_error()
    {
        var def = TestModels.TwoBarTruss(4, 0.35, 2.4e5, 10) with { GroundSprings = [new("rs", "apex", Axis.RotationZ, 5)] };
        var f = Single(def, FindingCode.RotationWithoutRotationalUnknowns);
        Assert.Equal("ground_springs[0].direction", f.FieldPath);
        Assert.Equal("rs", f.ItemId);
        Assert.Empty(ModelValidator.Validate(Good() with { GroundSprings = [new("rs", "tip", Axis.RotationZ, 5)] }));
    }

    [Fact]
    public void Rotational_support_at_a_node_without_rotations_is_a_warning_and_ignored()
    {
        var def = TestModels.TwoBarTruss(4, 0.35, 2.4e5, 10) with { Supports = [.. TestModels.TwoBarTruss(4, 0.35, 2.4e5, 10).Supports, new("left", Axis.RotationY)] };
        var f = Single(def, FindingCode.RotationWithoutRotationalUnknowns);
        Assert.Equal(FindingSeverity.Warning, f.Severity);
        Assert.Equal("supports[8].direction", f.FieldPath);
        var model = StructuralModel.Create(def);
        Assert.Equal(9, model.Dofs.FullCount);
    }

    [Fact]
    public void Direction_number_beyond_the_rotations_is_invalid()
    {
        var def = Good() with { Supports = [.. BeamModels.Fixed("root").Take(5), new("root", (Axis)6)] };
        Assert.Equal("supports[5].direction", Single(def, FindingCode.InvalidDirection).FieldPath);
    }

    [Fact]
    public void Released_end_does_not_give_its_node_rotations()
    {
        // A beam pinned at both ends between two bar joints: no node rotates, the model has 3 unknowns per node.
        var def = Good() with { Beams = [Good().Beams[0] with { StartReleases = BeamEndReleases.Pinned, EndReleases = BeamEndReleases.Pinned }],
            Supports = [.. TestModels.Pin("root")] };
        var f = ModelValidator.Validate(def);
        Assert.DoesNotContain(f, x => x.Severity == FindingSeverity.Error);
        var model = StructuralModel.Create(def);
        Assert.False(model.Dofs.HasRotations);
        // A rotation watched at the tip has no unknown to watch.
        var controls = new Continuation.SolverControls { Monitored = [new DofReference("tip", Axis.RotationY)] };
        var c = Assert.Single(controls.Validate(model));
        Assert.Equal(FindingCode.RotationWithoutRotationalUnknowns, c.Code);
        Assert.Equal("controls.monitored[0].direction", c.FieldPath);
    }

    [Fact]
    public void Subdivision_generates_named_nodes_with_a_half_sine_bow()
    {
        var def = WithBeam(b => b with { Subdivisions = 4, BowAmplitude = 0.02, BowPlane = BowPlane.LocalZ });
        var model = StructuralModel.Create(def);
        Assert.Equal(5, model.NodeCount);
        Assert.Equal(2, model.DefinedNodeCount);
        Assert.Equal(["root", "tip", "c#1", "c#2", "c#3"], model.NodeIds);
        Assert.Equal(["c/1", "c/2", "c/3", "c/4"], model.Beams.Ids);
        // Local axes: x along +x, orientation (0, 1, 0) gives y = +y, z = x × y = +z; the bow lies along +z.
        Assert.Equal(0.75, model.Coordinates[3 * 2], 15);
        Assert.Equal(0.02 * Math.Sin(Math.PI / 4), model.Coordinates[3 * 2 + 2], 15);
        Assert.Equal(0.02, model.Coordinates[3 * 3 + 2], 15);
        Assert.Equal(0, model.Coordinates[3 * 3 + 1], 15);
        // Every node rotates (rigid ends); the root is held in all six directions.
        Assert.Equal(30, model.Dofs.FullCount);
        Assert.Equal(24, model.Dofs.FreeCount);
        // Releases go to the member's ends only.
        Assert.Equal([0, 0, 0, 0], model.Beams.StartReleases);
    }
}
