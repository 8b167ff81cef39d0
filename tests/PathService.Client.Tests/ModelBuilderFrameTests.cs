using PathService.Client.Building;
using PathService.Contracts.V1;

namespace PathService.Client.Tests;

/// <summary>The model builder writes beams, releases, fixed and rotational supports, rotational springs and moments as the contract spells them.</summary>
public class ModelBuilderFrameTests
{
    [Fact]
    public void A_circular_tube_has_the_section_properties_of_the_steel_tables()
    {
        // CHS 114.3 × 5.0: A = 17.2 cm², I = 257 cm⁴ (EN 10210-2 section tables, from memory; the tables round to three
        // digits, so the tolerance is half a per cent).
        var s = BeamSection.CircularTube(2.1e8, 8.1e7, 0.1143, 0.005);
        Assert.Equal(17.2e-4, s.Area, 17.2e-4 * 5e-3);
        Assert.Equal(257e-8, s.SecondMomentY, 257e-8 * 5e-3);
        Assert.Equal(s.SecondMomentY, s.SecondMomentZ);
        Assert.Equal(2 * s.SecondMomentY, s.TorsionConstant);
        Assert.Throws<ArgumentException>(() => BeamSection.CircularTube(2.1e8, 8.1e7, 0.1, 0.06));
    }

    [Fact]
    public void A_portal_frame_built_in_code_carries_beams_releases_supports_springs_and_moments()
    {
        var tube = BeamSection.CircularTube(2.1e8, 8.1e7, 0.1143, 0.005);
        var b = new ModelBuilder("portal")
            .Node("a", 0, 0, 0).Node("b", 0, 0, 3).Node("c", 4, 0, 3).Node("d", 4, 0, 0)
            .Beam("col-L", "a", "b", tube, (1, 0, 0))
            .Beam("girder", "b", "c", tube, (0, 0, 1), g => { g.StartReleases = ModelBuilder.BendingHinge; g.Subdivisions = 4; })
            .Beam("col-R", "d", "c", tube, (1, 0, 0), g => g.EndReleases = ModelBuilder.Releases(torsion: true))
            .Fixed("a").Support("d").RotationalSpring("heel", "d", Direction.RotationY, 5e3)
            .ReferenceLoad("b", 10, 0, 0).ReferenceMoment("c", 0, 2.5, 0).ConstantMoment("b", 0, 0, -1);
        var model = b.BuildModel();
        Assert.Equal(["col-L", "girder", "col-R"], model.Beams.Select(x => x.Id));
        var girder = model.Beams[1];
        Assert.Equal((tube.Area, tube.SecondMomentY, tube.TorsionConstant, 2.1e8, 8.1e7), (girder.Area, girder.SecondMomentY, girder.TorsionConstant, girder.ElasticModulus, girder.ShearModulus));
        Assert.Equal((0.0, 0.0, 1.0), (girder.Orientation.X, girder.Orientation.Y, girder.Orientation.Z));
        Assert.True(girder.StartReleases is { Torsion: false, BendingY: true, BendingZ: true });
        Assert.Null(girder.EndReleases); // unset: rigid
        Assert.Equal(4, girder.Subdivisions);
        Assert.False(model.Beams[0].HasSubdivisions);
        Assert.True(model.Beams[2].EndReleases is { Torsion: true, BendingY: false });
        Assert.Equal([Direction.X, Direction.Y, Direction.Z, Direction.RotationX, Direction.RotationY, Direction.RotationZ],
            model.Supports.Where(s => s.Node == "a").Select(s => s.Direction));
        Assert.Equal(3, model.Supports.Count(s => s.Node == "d"));
        Assert.Equal(("d", Direction.RotationY, 5e3), (model.GroundSprings[0].Node, model.GroundSprings[0].Direction, model.GroundSprings[0].Stiffness));
        var loads = b.BuildLoadCase();
        Assert.Equal(2.5, loads.Reference[1].My);
        Assert.Equal(-1, loads.Constant[0].Mz);
        Assert.Throws<ArgumentException>(() => b.RotationalSpring("wrong", "d", Direction.X, 1));
    }
}
