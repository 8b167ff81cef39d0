using PathService.Ifc.Mapping;

namespace PathService.Ifc.Tests;

/// <summary>
/// Areas of the parametric profiles of ISO 16739-1:2018 (IfcProfileResource) against values worked by hand from the
/// sharp-cornered sections (our own dimensions; fillets ignored as documented).
/// </summary>
public class ProfileAreaTests
{
    [Fact]
    public void Circle_hollow_area_is_pi_times_the_difference_of_the_squared_radii()
    {
        // r = 50, t = 4: π(2500 − 2116) = 384π = 1206.371578978...
        Assert.Equal(1206.3715789784806, ProfileAreas.CircleHollow(50, 4), 1e-9);
    }

    [Fact]
    public void Rectangle_hollow_area_is_outer_minus_inner_rectangle()
    {
        // 100 × 60, t = 5: 6000 − 90·50 = 1500
        Assert.Equal(1500.0, ProfileAreas.RectangleHollow(100, 60, 5), 1e-12);
    }

    [Fact]
    public void I_shape_area_is_two_flanges_and_the_web_between_them()
    {
        // b = 100, d = 200, tw = 5.6, tf = 8.5: 2·100·8.5 + (200 − 17)·5.6 = 1700 + 1024.8 = 2724.8
        Assert.Equal(2724.8, ProfileAreas.IShape(100, 200, 5.6, 8.5), 1e-9);
    }

    [Fact]
    public void A_wall_as_thick_as_the_radius_is_refused_naming_the_attribute()
    {
        var e = Assert.Throws<PathService.Ifc.Step.StepFormatException>(() => IfcText.Import(IfcText.Wrap(
            "#1=IFCCIRCLEHOLLOWPROFILEDEF(.AREA.,'bad',$,20.,20.);\n" + Canopy.TwoBarsWithProfile(1))));
        Assert.Equal((1, 5), (e.Entity, e.Attribute));
        Assert.Contains("WallThickness (20) must be less than Radius (20)", e.Message);
    }
}

/// <summary>Small hand-written fragments around a profile.</summary>
internal static class Canopy
{
    /// <summary>Two connections, one member with a material E = 200 and the given profile instance.</summary>
    public static string TwoBarsWithProfile(int profile) =>
        "#50=IFCCARTESIANPOINT((0.,0.,0.));\n#51=IFCAXIS2PLACEMENT3D(#50,$,$);\n#52=IFCLOCALPLACEMENT($,#51);\n" +
        "#53=IFCCARTESIANPOINT((1.,0.,0.));\n#54=IFCAXIS2PLACEMENT3D(#53,$,$);\n#55=IFCLOCALPLACEMENT($,#54);\n" +
        "#56=IFCSTRUCTURALPOINTCONNECTION('a',$,'A',$,$,#52,$,$,$);\n#57=IFCSTRUCTURALPOINTCONNECTION('b',$,'B',$,$,#55,$,$,$);\n" +
        "#58=IFCDIRECTION((0.,0.,1.));\n#59=IFCSTRUCTURALCURVEMEMBER('m',$,'M',$,$,#52,$,.PIN_JOINED_MEMBER.,#58);\n" +
        "#60=IFCRELCONNECTSSTRUCTURALMEMBER('r1',$,$,$,#59,#56,$,$,$,$);\n#61=IFCRELCONNECTSSTRUCTURALMEMBER('r2',$,$,$,#59,#57,$,$,$,$);\n" +
        "#62=IFCMATERIAL('m',$,$);\n#63=IFCPROPERTYSINGLEVALUE('YoungModulus',$,IFCMODULUSOFELASTICITYMEASURE(200.),$);\n" +
        "#64=IFCMATERIALPROPERTIES('Pset_MaterialMechanical',$,(#63),#62);\n" +
        $"#65=IFCMATERIALPROFILE($,$,#62,#{profile},$,$);\n#66=IFCMATERIALPROFILESET($,$,(#65),$);\n#67=IFCMATERIALPROFILESETUSAGE(#66,$,$);\n" +
        "#68=IFCRELASSOCIATESMATERIAL('s',$,$,$,(#59),#67);";
}
