using PathService.Contracts.V1;
using PathService.Ifc.Mapping;

namespace PathService.Ifc.Tests;

/// <summary>What the mapper cannot carry over becomes a finding with the IFC instance, like model validation.</summary>
public class MappingFindingTests
{
    private const string Frame =
        "#1=IFCCARTESIANPOINT((0.,0.,0.));\n#2=IFCAXIS2PLACEMENT3D(#1,$,$);\n#3=IFCLOCALPLACEMENT($,#2);\n" +
        "#4=IFCCARTESIANPOINT((2.,0.,0.));\n#5=IFCAXIS2PLACEMENT3D(#4,$,$);\n#6=IFCLOCALPLACEMENT($,#5);\n" +
        "#7=IFCDIRECTION((0.,0.,1.));\n" +
        "#10=IFCSTRUCTURALPOINTCONNECTION('a',$,'A',$,$,#3,$,$,$);\n#11=IFCSTRUCTURALPOINTCONNECTION('b',$,'B',$,$,#6,$,$,$);\n";

    private static string Member(int n, string name, params int[] connections) =>
        $"#{n}=IFCSTRUCTURALCURVEMEMBER('m{n}',$,'{name}',$,$,#3,$,.PIN_JOINED_MEMBER.,#7);\n" +
        string.Concat(connections.Select((c, i) => $"#{n * 10 + i}=IFCRELCONNECTSSTRUCTURALMEMBER('r{n}{i}',$,$,$,#{n},#{c},$,$,$,$);\n"));

    [Fact]
    public void A_member_without_material_or_profile_gets_error_findings_naming_it()
    {
        var r = IfcText.Import(IfcText.Wrap(Frame + Member(20, "bare", 10, 11)));
        var bar = Assert.Single(r.Model.Bars);
        Assert.Equal((0.0, 0.0), (bar.ElasticModulus, bar.Area));
        Assert.Contains(r.Findings, f => f is { Code: "MISSING_MATERIAL", Field: "ifc #20", ItemId: "bare", Severity: FindingSeverity.Error });
        Assert.Contains(r.Findings, f => f is { Code: "MISSING_PROFILE", Field: "ifc #20", Severity: FindingSeverity.Error });
    }

    [Fact]
    public void A_member_with_one_connection_is_not_mapped_and_says_why()
    {
        var r = IfcText.Import(IfcText.Wrap(Frame + Member(20, "stub", 10)));
        Assert.Empty(r.Model.Bars);
        var f = Assert.Single(r.Findings, f => f.Code == "MEMBER_NOT_MAPPED");
        Assert.Equal(("ifc #20", FindingSeverity.Error), (f.Field, f.Severity));
        Assert.Contains("1 mapped point connection", f.Message);
    }

    [Fact]
    public void An_unsupported_profile_without_a_stated_area_is_an_error_finding()
    {
        var r = IfcText.Import(IfcText.Wrap("#1=IFCTSHAPEPROFILEDEF(.AREA.,'T',$,100.,100.,8.,10.,$,$,$,$,$);\n" + Canopy.TwoBarsWithProfile(1)));
        Assert.Contains(r.Findings, f => f is { Code: "UNSUPPORTED_PROFILE", Field: "ifc #1", ItemId: "M" });
        // No units assigned: 200 N/m² (metre and newton assumed) = 0.2 kN/m².
        Assert.Equal(0.2, r.Model.Bars[0].ElasticModulus, 1e-16);
    }

    [Fact]
    public void A_condition_in_rotated_axes_is_not_applied_and_reported()
    {
        string data = Frame.Replace("#10=IFCSTRUCTURALPOINTCONNECTION('a',$,'A',$,$,#3,$,$,$);",
            "#8=IFCDIRECTION((1.,1.,0.));\n#9=IFCAXIS2PLACEMENT3D(#1,#7,#8);\n#12=IFCBOUNDARYNODECONDITION('c',IFCBOOLEAN(.T.),$,$,$,$,$);\n" +
            "#10=IFCSTRUCTURALPOINTCONNECTION('a',$,'A',$,$,#3,$,#12,#9);") + Member(20, "m", 10, 11);
        var r = IfcText.Import(IfcText.Wrap(data));
        Assert.Empty(r.Model.Supports);
        Assert.Contains(r.Findings, f => f is { Code: "ROTATED_CONDITION_AXES", Field: "ifc #10", ItemId: "A", Severity: FindingSeverity.Error });
    }

    [Fact]
    public void A_negative_stiffness_is_an_error_finding_and_not_applied()
    {
        string data = Frame.Replace("#10=IFCSTRUCTURALPOINTCONNECTION('a',$,'A',$,$,#3,$,$,$);",
            "#12=IFCBOUNDARYNODECONDITION('c',IFCLINEARSTIFFNESSMEASURE(-4.),$,IFCBOOLEAN(.T.),$,$,$);\n#10=IFCSTRUCTURALPOINTCONNECTION('a',$,'A',$,$,#3,$,#12,$);") + Member(20, "m", 10, 11);
        var r = IfcText.Import(IfcText.Wrap(data));
        Assert.Empty(r.Model.GroundSprings);
        Assert.Equal(Direction.Z, Assert.Single(r.Model.Supports).Direction);
        Assert.Contains(r.Findings, f => f is { Code: "NEGATIVE_STIFFNESS", Field: "ifc #12", Severity: FindingSeverity.Error });
    }

    [Fact]
    public void Several_analysis_models_need_a_choice_by_name_or_global_id()
    {
        string data = Frame + Member(20, "m", 10, 11) +
            "#30=IFCSTRUCTURALANALYSISMODEL('g1',$,'first',$,$,.LOADING_3D.,$,$,$,$);\n#31=IFCSTRUCTURALANALYSISMODEL('g2',$,'second',$,$,.LOADING_3D.,$,$,$,$);\n" +
            "#32=IFCRELASSIGNSTOGROUP('x',$,$,$,(#10,#11,#20),$,#31);\n#33=IFCRELASSIGNSTOGROUP('y',$,$,$,(#10,#11),$,#30);";
        var e = Assert.Throws<IfcOptionException>(() => IfcText.Import(IfcText.Wrap(data)));
        Assert.Equal(IfcOption.AnalysisModel, e.Option);
        Assert.Contains("#30 'first' (g1)", e.Message);
        Assert.Empty(IfcText.Import(IfcText.Wrap(data), new IfcImportOptions { AnalysisModel = "first" }).Model.Bars);
        Assert.Single(IfcText.Import(IfcText.Wrap(data), new IfcImportOptions { AnalysisModel = "g2" }).Model.Bars);
    }

    [Fact]
    public void Missing_names_and_units_are_replaced_and_reported()
    {
        var r = IfcText.Import(IfcText.Wrap(Frame.Replace("'B',$,$,#6", "$,$,$,#6") + Member(20, "m", 10, 11)));
        Assert.Contains(r.Model.Nodes, n => n.Id == "C11");
        Assert.Contains(r.Findings, f => f is { Code: "NAME_REPLACED", Field: "ifc #11", ItemId: "C11" });
        Assert.Contains(r.Findings, f => f.Code == "UNIT_ASSUMED" && f.Message.Contains("LENGTHUNIT"));
        Assert.Contains(r.Findings, f => f.Code == "NO_ANALYSIS_MODEL");
    }
}

/// <summary>IFC2X3, where it differs little: mechanical material properties and general profile properties.</summary>
public class Ifc2x3Tests
{
    [Fact]
    public void An_IFC2X3_member_reads_E_and_the_stated_area_and_its_stiffness_as_a_spring()
    {
        string data =
            "#1=IFCSIUNIT(*,.LENGTHUNIT.,.MILLI.,.METRE.);\n#2=IFCSIUNIT(*,.FORCEUNIT.,$,.NEWTON.);\n#3=IFCSIUNIT(*,.PRESSUREUNIT.,.MEGA.,.PASCAL.);\n" +
            "#4=IFCUNITASSIGNMENT((#1,#2,#3));\n#5=IFCPROJECT('p',$,'p',$,$,$,$,$,#4);\n" +
            "#10=IFCCARTESIANPOINT((0.,0.,0.));\n#11=IFCAXIS2PLACEMENT3D(#10,$,$);\n#12=IFCLOCALPLACEMENT($,#11);\n" +
            "#13=IFCCARTESIANPOINT((0.,0.,2500.));\n#14=IFCAXIS2PLACEMENT3D(#13,$,$);\n#15=IFCLOCALPLACEMENT($,#14);\n" +
            "#16=IFCBOUNDARYNODECONDITION('spring',$,$,750.,$,$,$);\n" +
            "#20=IFCSTRUCTURALPOINTCONNECTION('a',$,'foot',$,$,#12,$,#16);\n#21=IFCSTRUCTURALPOINTCONNECTION('b',$,'head',$,$,#15,$,$);\n" +
            "#22=IFCSTRUCTURALCURVEMEMBER('m',$,'post',$,$,#12,$,.PIN_JOINED_MEMBER.);\n" +
            "#23=IFCRELCONNECTSSTRUCTURALMEMBER('r1',$,$,$,#22,#20,$,$,$,$);\n#24=IFCRELCONNECTSSTRUCTURALMEMBER('r2',$,$,$,#22,#21,$,$,$,$);\n" +
            "#30=IFCMATERIAL('steel');\n#31=IFCMECHANICALMATERIALPROPERTIES(#30,$,205000.,$,$,$);\n#32=IFCRELASSOCIATESMATERIAL('s',$,$,$,(#22),#30);\n" +
            "#33=IFCGENERALPROFILEPROPERTIES('tube',$,$,$,$,$,1250.);\n#34=IFCRELASSOCIATESPROFILEPROPERTIES('q',$,$,$,(#22),#33,$,$);";
        var r = IfcText.Import(IfcText.Wrap(data, "IFC2X3"));
        var bar = Assert.Single(r.Model.Bars);
        // 205000 MPa = 2.05e8 kN/m² (PRESSUREUNIT used for the modulus); 1250 mm² = 1.25e-3 m².
        Assert.Equal(2.05e8, bar.ElasticModulus, 1e-6);
        Assert.Equal(1.25e-3, bar.Area, 1e-18);
        Assert.Equal(2.5, r.Model.Nodes.Single(n => n.Id == "head").Z, 1e-15);
        var spring = Assert.Single(r.Model.GroundSprings);
        // 750 N/mm (derived, no stiffness unit) = 750 kN/m.
        Assert.Equal(("foot-kz", 750.0), (spring.Id, spring.Stiffness));
        Assert.Contains(r.Findings, f => f.Code == "IFC2X3_STIFFNESS_AS_SPRING");
        Assert.Equal("IFC2X3", r.Schema);
    }
}

/// <summary>
/// The analysis model's coordinate system (IfcStructuralAnalysisModel.SharedPlacement, ISO 16739-1:2018
/// IfcStructuralItem: the items' placement; conditions and GLOBAL_COORDS actions refer to it).
/// </summary>
public class SharedPlacementTests
{
    [Fact]
    public void Coordinates_conditions_and_loads_are_given_in_the_turned_shared_placement()
    {
        // Shared placement at (10, 0, 0), turned 90° about z (its x is the world's y).
        string data =
            "#1=IFCCARTESIANPOINT((10.,0.,0.));\n#2=IFCDIRECTION((0.,0.,1.));\n#3=IFCDIRECTION((0.,1.,0.));\n#4=IFCAXIS2PLACEMENT3D(#1,#2,#3);\n" +
            "#5=IFCLOCALPLACEMENT($,#4);\n" +
            "#6=IFCCARTESIANPOINT((0.,0.,0.));\n#7=IFCVERTEXPOINT(#6);\n#8=IFCTOPOLOGYREPRESENTATION($,'Reference','Vertex',(#7));\n#9=IFCPRODUCTDEFINITIONSHAPE($,$,(#8));\n" +
            "#10=IFCCARTESIANPOINT((3.,0.,0.));\n#11=IFCVERTEXPOINT(#10);\n#12=IFCTOPOLOGYREPRESENTATION($,'Reference','Vertex',(#11));\n#13=IFCPRODUCTDEFINITIONSHAPE($,$,(#12));\n" +
            "#14=IFCBOUNDARYNODECONDITION('x',IFCBOOLEAN(.T.),$,$,$,$,$);\n" +
            "#20=IFCSTRUCTURALPOINTCONNECTION('a',$,'A',$,$,#5,#9,#14,$);\n#21=IFCSTRUCTURALPOINTCONNECTION('b',$,'B',$,$,#5,#13,$,$);\n" +
            "#22=IFCSTRUCTURALCURVEMEMBER('m',$,'M',$,$,#5,$,.PIN_JOINED_MEMBER.,#2);\n" +
            "#23=IFCRELCONNECTSSTRUCTURALMEMBER('r',$,$,$,#22,#20,$,$,$,$);\n#24=IFCRELCONNECTSSTRUCTURALMEMBER('s',$,$,$,#22,#21,$,$,$,$);\n" +
            "#30=IFCSTRUCTURALLOADSINGLEFORCE('g',2.,0.,0.,$,$,$);\n#31=IFCSTRUCTURALPOINTACTION('p',$,'g',$,$,#5,$,#30,.GLOBAL_COORDS.,$);\n" +
            "#32=IFCRELCONNECTSSTRUCTURALACTIVITY('q',$,$,$,#21,#31);\n#33=IFCSTRUCTURALLOADGROUP('lg',$,'push',$,$,.LOAD_GROUP.,$,$,$,$);\n" +
            "#34=IFCRELASSIGNSTOGROUP('t',$,$,$,(#31),$,#33);\n" +
            "#40=IFCSTRUCTURALANALYSISMODEL('am',$,'turned',$,$,.LOADING_3D.,$,(#33),$,#5);\n#41=IFCRELASSIGNSTOGROUP('u',$,$,$,(#20,#21,#22),$,#40);";
        var r = IfcText.Import(IfcText.Wrap(data));
        var b = r.Model.Nodes.Single(n => n.Id == "B");
        Assert.Equal((3.0, 0.0, 0.0), (b.X, b.Y, b.Z));
        Assert.Equal(("A", Direction.X), (r.Model.Supports[0].Node, r.Model.Supports[0].Direction));
        Assert.Equal(0.002, r.LoadCase.Reference[0].Fx, 1e-18); // 2 N (no units assigned) in kN, along the model's x
        Assert.DoesNotContain(r.Findings, f => f.Code == "CONDITION_AXES_ASSUMED");
    }
}
