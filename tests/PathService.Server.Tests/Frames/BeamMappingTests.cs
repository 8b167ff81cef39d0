using Grpc.Core;
using Microsoft.Extensions.Options;
using PathService.Application;
using PathService.Application.Analyses;
using PathService.Application.Errors;
using PathService.Application.Validation;
using PathService.Contracts.Mapping;
using PathService.Contracts.V1;
using PathService.Server.Configuration;
using PathService.Server.Limits;
using PathService.Server.Tests.Fixtures;
using Axis = PathService.Engine.Model.Axis;

namespace PathService.Server.Tests.Frames;

/// <summary>
/// Beams, rotational directions and moments cross the mapping intact (message → engine record → message), unset fields
/// take the defaults the contract promises, and every new field's range is refused with its request path.
/// </summary>
public class BeamMappingTests
{
    private static Beam FullBeam() => new()
    {
        Id = "B1", StartNode = "a", EndNode = "b", ElasticModulus = 2.1e8, ShearModulus = 8.1e7, Area = 1.7e-3,
        SecondMomentY = 2.5e-6, SecondMomentZ = 3.5e-6, TorsionConstant = 5e-6,
        Orientation = new OrientationVector { X = 0.1, Y = -0.2, Z = 0.9 },
        StartReleases = new BeamEndReleases { Torsion = false, BendingY = true, BendingZ = false },
        EndReleases = new BeamEndReleases { Torsion = true, BendingY = false, BendingZ = true },
        Subdivisions = 4, BowAmplitude = -0.012, BowPlane = BowPlane.LocalZ,
    };

    [Fact]
    public void A_beam_with_every_field_set_comes_back_from_the_engine_record_unchanged()
    {
        var beam = FullBeam();
        var record = BeamMapper.ToDefinition(beam);
        Assert.Equal((0.1, -0.2, 0.9), record.Orientation);
        Assert.Equal(new Engine.Model.BeamEndReleases(false, true, false), record.StartReleases);
        Assert.Equal(new Engine.Model.BeamEndReleases(true, false, true), record.EndReleases);
        Assert.Equal(4, record.Subdivisions);
        Assert.Equal(Engine.Model.BowPlane.LocalZ, record.BowPlane);
        Assert.Equal(beam, BeamMapper.ToMessage(record));
    }

    [Fact]
    public void An_unset_beam_field_takes_its_documented_default()
    {
        var beam = FullBeam();
        beam.ClearSubdivisions();
        beam.StartReleases = null;
        beam.EndReleases = null;
        beam.BowPlane = BowPlane.Unspecified;
        var record = BeamMapper.ToDefinition(beam);
        Assert.Equal(1, record.Subdivisions);                          // subdivisions: unset = 1
        Assert.Equal(Engine.Model.BeamEndReleases.Rigid, record.StartReleases); // releases: unset = rigid
        Assert.Equal(Engine.Model.BeamEndReleases.Rigid, record.EndReleases);
        Assert.Equal(Engine.Model.BowPlane.LocalY, record.BowPlane);   // bow plane: unspecified = local y
        Assert.False(record.StartReleases.Torsion || record.StartReleases.BendingY || record.StartReleases.BendingZ);
        // A portal frame with every optional beam field unset is valid as it stands.
        var (model, loads) = FrameStructures.Portal();
        Assert.All(model.Beams, b => Assert.False(b.HasSubdivisions));
        var check = Check(model, loads);
        Assert.True(check.Valid, string.Join("; ", check.Findings.Select(f => f.Message)));
    }

    [Theory]
    [InlineData(Direction.X, Axis.X)]
    [InlineData(Direction.Y, Axis.Y)]
    [InlineData(Direction.Z, Axis.Z)]
    [InlineData(Direction.RotationX, Axis.RotationX)]
    [InlineData(Direction.RotationY, Axis.RotationY)]
    [InlineData(Direction.RotationZ, Axis.RotationZ)]
    public void Every_direction_maps_to_its_engine_axis_and_back(Direction direction, Axis axis)
    {
        Assert.Equal(axis, ModelMapper.ToAxis(direction));
        Assert.Equal(direction, ModelMapper.ToDirection(axis));
        var dof = ModelMapper.ToDof(new DofRef { Node = "n", Direction = direction })!;
        Assert.Equal(axis, dof.Direction);
    }

    [Fact]
    public void A_nodal_load_with_moments_comes_back_unchanged()
    {
        var load = new NodalLoad { Node = "head-L", Fx = 1.5, Fy = -2, Fz = 3, Mx = 4.25, My = -5.5, Mz = 6.75 };
        var record = ModelMapper.ToLoad(load);
        Assert.Equal((4.25, -5.5, 6.75), (record.Mx, record.My, record.Mz));
        Assert.Equal(load, ModelMapper.ToMessage(record));
        // Moments default to zero: a force-only load has none.
        Assert.False(ModelMapper.ToLoad(new NodalLoad { Node = "n", Fz = -1 }).HasMoment);
    }

    [Fact]
    public void Beams_rotational_supports_and_moments_reach_the_engine_definition()
    {
        var (model, loads) = FrameStructures.Portal();
        loads.Reference.Add(new NodalLoad { Node = "head-R", My = 2.5 });
        var def = ModelMapper.ToDefinition(model, loads);
        Assert.Equal(["col-L", "girder", "col-R"], def.Beams.Select(b => b.Id));
        Assert.Equal(6, def.Supports.Count(s => s.Node == "foot-L"));
        Assert.Contains(def.Supports, s => s.Node == "foot-R" && s.Direction == Axis.RotationZ);
        Assert.Equal(2.5, def.Loads.Reference[1].My);
    }

    /// <summary>Each beam field's range promise, refused with the finding's code at the field's request path.</summary>
    [Theory]
    [InlineData("elastic_modulus", "NON_POSITIVE_STIFFNESS")]
    [InlineData("shear_modulus", "NON_POSITIVE_STIFFNESS")]
    [InlineData("area", "NON_POSITIVE_AREA")]
    [InlineData("second_moment_y", "BEAM_PROPERTY_OUT_OF_RANGE")]
    [InlineData("second_moment_z", "BEAM_PROPERTY_OUT_OF_RANGE")]
    [InlineData("torsion_constant", "BEAM_PROPERTY_OUT_OF_RANGE")]
    [InlineData("orientation", "BEAM_PROPERTY_OUT_OF_RANGE")]
    [InlineData("orientation.y", "NON_FINITE_NUMBER")]
    [InlineData("orientation-parallel", "BEAM_PROPERTY_OUT_OF_RANGE")]
    [InlineData("subdivisions", "MEMBER_SUBDIVISION_OUT_OF_RANGE")]
    [InlineData("subdivisions-101", "MEMBER_SUBDIVISION_OUT_OF_RANGE")]
    [InlineData("bow_amplitude", "MEMBER_SUBDIVISION_OUT_OF_RANGE")]
    [InlineData("bow_plane", "UNKNOWN_OPTION")]
    [InlineData("torsion-released-twice", "MEMBER_SUBDIVISION_OUT_OF_RANGE")]
    [InlineData("start_node", "UNKNOWN_NODE")]
    [InlineData("id", "DUPLICATE_ID")]
    public void A_beam_field_out_of_range_is_refused_with_its_path(string field, string code)
    {
        var (model, loads) = FrameStructures.Portal();
        var girder = model.Beams[1];
        string path = field;
        switch (field)
        {
            case "elastic_modulus": girder.ElasticModulus = 0; break;
            case "shear_modulus": girder.ShearModulus = -8e7; break;
            case "area": girder.Area = 0; break;
            case "second_moment_y": girder.SecondMomentY = 0; break;
            case "second_moment_z": girder.SecondMomentZ = -1e-6; break;
            case "torsion_constant": girder.TorsionConstant = 0; break;
            case "orientation": girder.Orientation = null; break; // required: unset reads as a zero vector
            case "orientation.y": girder.Orientation.Y = double.NaN; break;
            case "orientation-parallel": girder.Orientation = new OrientationVector { X = -2 }; path = "orientation"; break; // along the girder
            case "subdivisions": girder.Subdivisions = 0; break;
            case "subdivisions-101": girder.Subdivisions = 101; path = "subdivisions"; break;
            case "bow_amplitude": girder.BowAmplitude = 0.01; break; // a bow on an undivided member
            case "bow_plane": girder.BowPlane = (BowPlane)7; break;
            case "torsion-released-twice":
                girder.Subdivisions = 3;
                girder.StartReleases = new BeamEndReleases { Torsion = true };
                girder.EndReleases = new BeamEndReleases { Torsion = true };
                path = "subdivisions";
                break;
            case "start_node": girder.StartNode = "nowhere"; break;
            case "id": girder.Id = "col-L"; break;
        }
        var check = Check(model, loads);
        Assert.False(check.Valid);
        var finding = Assert.Single(check.Findings, f => f.Severity == FindingSeverity.Error);
        Assert.Equal(code, finding.Code);
        Assert.Equal($"model.beams[1].{path}", finding.Field);
        Assert.Equal(field == "id" ? "col-L" : "girder", finding.ItemId);
    }

    [Fact]
    public void A_moment_at_a_node_without_rotations_is_refused_at_its_path()
    {
        // The two-bar truss has no beam: its apex carries no rotational unknowns.
        var loads = DemoStructures.ApexLoad();
        loads.Reference.Add(new NodalLoad { Node = "apex", Mz = 1 });
        var check = Check(DemoStructures.TwoBarTruss(), loads);
        var finding = Assert.Single(check.Findings);
        Assert.Equal(("ROTATION_WITHOUT_ROTATIONAL_UNKNOWNS", "load_case.reference[1].mz"), (finding.Code, finding.Field));
    }

    [Fact]
    public void A_rotational_spring_needs_rotations_and_a_rotational_support_without_them_is_a_warning()
    {
        var model = DemoStructures.TwoBarTruss();
        model.GroundSprings.Add(new GroundSpring { Id = "k-rot", Node = "apex", Direction = Direction.RotationZ, Stiffness = 100 });
        model.Supports.Add(new Support { Node = "left", Direction = Direction.RotationY });
        var check = Check(model, DemoStructures.ApexLoad());
        Assert.Contains(check.Findings, f => f is { Severity: FindingSeverity.Error, Code: "ROTATION_WITHOUT_ROTATIONAL_UNKNOWNS", Field: "model.ground_springs[0].direction", ItemId: "k-rot" });
        Assert.Contains(check.Findings, f => f is { Severity: FindingSeverity.Warning, Code: "ROTATION_WITHOUT_ROTATIONAL_UNKNOWNS", Field: "model.supports[8].direction" });
        // In a frame the same spring and support are accepted.
        var (frame, loads) = FrameStructures.Portal();
        frame.GroundSprings.Add(new GroundSpring { Id = "k-rot", Node = "head-R", Direction = Direction.RotationY, Stiffness = 1e4 });
        Assert.True(Check(frame, loads).Valid);
    }

    [Fact]
    public void An_unknown_direction_number_is_quoted_as_sent()
    {
        var (model, loads) = FrameStructures.Portal();
        model.Supports[0].Direction = (Direction)9;
        var finding = Assert.Single(Check(model, loads).Findings);
        Assert.Equal(("INVALID_DIRECTION", "model.supports[0].direction"), (finding.Code, finding.Field));
        Assert.Contains("9", finding.Message);
    }

    [Fact]
    public void Beam_elements_and_their_generated_nodes_count_against_the_member_and_node_limits()
    {
        var limits = new RequestChecks(new AnalysisLimits { MaxNodes = 10, MaxBars = 8 });
        var (model, _) = FrameStructures.Portal();
        limits.ModelSize(model); // 4 nodes, 3 members
        model.Beams[1].Subdivisions = 6; // 8 members, 9 nodes
        limits.ModelSize(model);
        model.Beams[1].Subdivisions = 7; // 9 members
        var members = Assert.Throws<AnalysisRefusedException>(() => limits.ModelSize(model));
        Assert.Equal(RefusalKind.OverLimit, members.Kind);
        Assert.Equal("model.beams", members.Field);
        Assert.Contains("9 beam elements", members.Message);
        model.Beams[1].Subdivisions = 4; // 6 members, 4 + 3 nodes
        model.Nodes.Add(Enumerable.Range(0, 4).Select(i => new Node { Id = $"extra{i}", X = i + 10 })); // 8 nodes + 3 generated = 11
        var nodes = Assert.Throws<AnalysisRefusedException>(() => limits.ModelSize(model));
        Assert.Contains("subdivisions add 3", nodes.Message);
    }

    private static CheckModelResponse Check(StructureModel model, LoadCase loads) =>
        ModelCheck.Run(new CheckModelRequest { Model = model, LoadCase = loads }, new AnalysisLimits());
}
