using PathService.Engine.Continuation;
using PathService.Engine.Model;

namespace PathService.Engine.Tests.Unit;

/// <summary>Every validation case gives its own specific finding naming the field and the item.</summary>
public class ValidationTests
{
    private static ModelDefinition Good() => TestModels.TwoBarTruss(4, 0.35, 2.4e5, 10);

    private static ValidationFinding Single(ModelDefinition def, FindingCode code)
    {
        var findings = ModelValidator.Validate(def);
        return Assert.Single(findings, f => f.Code == code);
    }

    [Fact]
    public void A_good_model_has_no_findings() => Assert.Empty(ModelValidator.Validate(Good()));

    [Fact]
    public void Unknown_node_reference_names_the_bar_and_the_node()
    {
        var def = Good() with { Bars = [new("bar-L", "left", "apex", 2e8, 1e-3), new("bar-R", "apex", "rigth", 2e8, 1e-3)] };
        var f = Single(def, FindingCode.UnknownNode);
        Assert.Equal("bars[1].end_node", f.FieldPath);
        Assert.Equal("bar-R", f.ItemId);
        Assert.Contains("'rigth'", f.Message);
    }

    [Fact]
    public void Duplicate_node_id_is_reported_with_the_first_position()
    {
        var def = Good() with { Nodes = [.. Good().Nodes, new("apex", 1, 1, 0)] };
        var f = ModelValidator.Validate(def).First(x => x.Code == FindingCode.DuplicateId);
        Assert.Equal("nodes[3].id", f.FieldPath);
        Assert.Contains("nodes[1]", f.Message);
    }

    [Fact]
    public void Duplicate_bar_id_is_reported()
    {
        var def = Good() with { Bars = [new("b", "left", "apex", 2e8, 1e-3), new("b", "apex", "right", 2e8, 1e-3)] };
        Assert.Equal("bars[1].id", Single(def, FindingCode.DuplicateId).FieldPath);
    }

    [Theory]
    [InlineData(double.NaN)]
    [InlineData(double.PositiveInfinity)]
    [InlineData(double.NegativeInfinity)]
    public void Non_finite_coordinate_names_the_node_and_axis(double bad)
    {
        var def = Good() with { Nodes = [new("left", -4, 0, 0), new("apex", 0, bad, 0), new("right", 4, 0, 0)] };
        var f = Single(def, FindingCode.NonFiniteNumber);
        Assert.Equal("nodes[1].y", f.FieldPath);
        Assert.Equal("apex", f.ItemId);
    }

    [Fact]
    public void Magnitude_beyond_limit_points_at_units()
    {
        var def = Good() with { Bars = [new("bar-L", "left", "apex", 1e308, 1e-3), new("bar-R", "apex", "right", 2e8, 1e-3)] };
        var f = Single(def, FindingCode.MagnitudeBeyondLimit);
        Assert.Equal("bars[0].elastic_modulus", f.FieldPath);
        Assert.Contains("units", f.Message);
    }

    [Fact]
    public void Zero_length_bar_is_rejected()
    {
        var def = Good() with
        {
            Nodes = [.. Good().Nodes, new("twin", 0, 0.35, 0)],
            Bars = [.. Good().Bars, new("stub", "apex", "twin", 2e8, 1e-3)],
        };
        var f = Single(def, FindingCode.ZeroLengthBar);
        Assert.Equal("stub", f.ItemId);
        Assert.Equal("bars[2]", f.FieldPath);
    }

    [Theory]
    [InlineData(0.0)]
    [InlineData(-5.0)]
    public void Non_positive_area_and_modulus_are_rejected(double bad)
    {
        var def = Good() with { Bars = [new("bar-L", "left", "apex", bad, bad), new("bar-R", "apex", "right", 2e8, 1e-3)] };
        Assert.Equal("bars[0].area", Single(def, FindingCode.NonPositiveArea).FieldPath);
        Assert.Equal("bars[0].elastic_modulus", Single(def, FindingCode.NonPositiveStiffness).FieldPath);
    }

    [Fact]
    public void Non_positive_spring_stiffness_is_rejected()
    {
        var def = Good() with { GroundSprings = [new("soft", "apex", Axis.Y, -1)] };
        var f = Single(def, FindingCode.NonPositiveStiffness);
        Assert.Equal("ground_springs[0].stiffness", f.FieldPath);
        Assert.Equal("soft", f.ItemId);
    }

    [Fact]
    public void Missing_reference_load_is_rejected()
    {
        var def = Good() with { Loads = new LoadCaseDefinition([new NodalLoad("apex", 0, -1, 0)], []) };
        Assert.Equal("loads.reference", Single(def, FindingCode.NoReferenceLoad).FieldPath);
        var zero = Good() with { Loads = LoadCaseDefinition.ReferenceOnly(new NodalLoad("apex", 0, 0, 0)) };
        Single(zero, FindingCode.NoReferenceLoad);
    }

    [Fact]
    public void Node_touched_by_no_bar_or_spring_is_rejected()
    {
        var def = Good() with { Nodes = [.. Good().Nodes, new("lonely", 9, 9, 9)] };
        var f = Single(def, FindingCode.UnconnectedNode);
        Assert.Equal("lonely", f.ItemId);
        Assert.Equal("nodes[3]", f.FieldPath);
    }

    [Fact]
    public void Bar_with_the_same_node_at_both_ends_is_rejected()
    {
        var def = Good() with { Bars = [.. Good().Bars, new("loop", "apex", "apex", 2e8, 1e-3)] };
        Assert.Equal("loop", Single(def, FindingCode.SameNodeAtBothEnds).ItemId);
    }

    [Fact]
    public void All_findings_are_reported_at_once()
    {
        var def = Good() with
        {
            Bars = [new("bar-L", "left", "nowhere", -1, 0), new("bar-R", "apex", "right", 2e8, 1e-3)],
            Loads = new LoadCaseDefinition([], []),
        };
        var codes = ModelValidator.Validate(def).Select(f => f.Code).ToHashSet();
        Assert.Superset(new HashSet<FindingCode> { FindingCode.UnknownNode, FindingCode.NonPositiveStiffness, FindingCode.NonPositiveArea, FindingCode.NoReferenceLoad }, codes);
        var ex = Assert.Throws<ModelValidationException>(() => StructuralModel.Create(def));
        Assert.True(ex.Findings.Count >= 4);
    }

    [Fact]
    public void Empty_model_is_rejected() =>
        Assert.Contains(ModelValidator.Validate(new ModelDefinition()), f => f.Code == FindingCode.EmptyModel);

    [Fact]
    public void Duplicate_support_is_rejected()
    {
        var def = Good() with { Supports = [.. Good().Supports, new("apex", Axis.X)] };
        Assert.Equal("apex", Single(def, FindingCode.DuplicateSupport).ItemId);
    }

    [Fact]
    public void Bad_controls_name_the_field()
    {
        var model = StructuralModel.Create(Good());
        var controls = new SolverControls { InitialLoadIncrement = double.NaN, MaxPoints = 0, Monitored = [new DofReference("ghost", Axis.Y)] };
        var ex = Assert.Throws<ModelValidationException>(() => new PathTracer(model, controls).Trace());
        var paths = ex.Findings.Select(f => f.FieldPath).ToList();
        Assert.Contains("controls.initial_load_increment", paths);
        Assert.Contains("controls.max_points", paths);
        Assert.Contains("controls.monitored[0].node", paths);
        Assert.Contains(ex.Findings, f => f.FieldPath == "controls.initial_load_increment" && f.Code == FindingCode.ControlOutOfRange);
        Assert.Contains(ex.Findings, f => f.FieldPath == "controls.max_points" && f.Code == FindingCode.ControlOutOfRange);
        Assert.Contains(ex.Findings, f => f.FieldPath == "controls.monitored[0].node" && f.Code == FindingCode.UnknownNode);
    }

    [Fact]
    public void Each_kind_of_control_fault_has_its_own_code()
    {
        var model = StructuralModel.Create(Good());
        var missing = new SolverControls { Method = ContinuationMethod.DisplacementControl, InitialDisplacementIncrement = 0, TargetDisplacement = 0.1 };
        var codes = missing.Validate(model).ToDictionary(f => f.FieldPath, f => f.Code);
        Assert.Equal(FindingCode.ControlMissing, codes["controls.control_dof"]);
        Assert.Equal(FindingCode.ControlOutOfRange, codes["controls.initial_displacement_increment"]);
        Assert.Equal(FindingCode.ControlMissing, codes["controls.target_displacement_dof"]);

        var conflict = new SolverControls { Method = ContinuationMethod.LoadControl, SwitchBranches = true };
        Assert.Equal(FindingCode.ControlConflict, Assert.Single(conflict.Validate(model)).Code);

        var unknown = new SolverControls { Method = (ContinuationMethod)77, Constraint = (ArcLengthConstraint)5 };
        Assert.All(unknown.Validate(model), f => Assert.Equal(FindingCode.UnknownOption, f.Code));
        Assert.Equal(2, unknown.Validate(model).Count);
    }

    [Theory]
    [InlineData(0.0)]
    [InlineData(-1e-11)]
    [InlineData(0.01)]
    [InlineData(double.NaN)]
    public void Singular_pivot_ratio_outside_its_range_is_rejected(double ratio)
    {
        var f = Assert.Single(new SolverControls { SingularPivotRatio = ratio }.Validate(StructuralModel.Create(Good())));
        Assert.Equal(("controls.singular_pivot_ratio", FindingCode.ControlOutOfRange), (f.FieldPath, f.Code));
    }

    [Fact]
    public void Fallback_alignment_threshold_outside_its_range_is_rejected()
    {
        var f = Assert.Single(new SolverControls { FallbackAlignmentThreshold = 1.0 }.Validate(StructuralModel.Create(Good())));
        Assert.Equal(("controls.fallback_alignment_threshold", FindingCode.ControlOutOfRange), (f.FieldPath, f.Code));
    }

    [Fact]
    public void Displacement_control_on_a_restrained_direction_is_rejected()
    {
        var model = StructuralModel.Create(Good());
        var controls = new SolverControls { Method = ContinuationMethod.DisplacementControl, ControlDof = new("apex", Axis.X), InitialDisplacementIncrement = -0.01 };
        var ex = Assert.Throws<ModelValidationException>(() => new PathTracer(model, controls).Trace());
        Assert.Contains(ex.Findings, f => f.FieldPath == "controls.control_dof" && f.Code == FindingCode.ControlConflict && f.Message.Contains("restrained"));
    }
}

/// <summary>Bad member data and branch-switching controls get their own findings.</summary>
public class MemberAndBranchValidationTests
{
    private static ModelDefinition WithBar(BarDefinition bar) =>
        TestModels.TwoBarTruss(4, 0.35, 2.4e5, 10) with { Bars = [bar, new("bar-R", "apex", "right", 2e8, 1.2e-3)] };

    [Fact]
    public void Negative_yield_stress_second_moment_and_effective_length_are_rejected()
    {
        var def = WithBar(new("bar-L", "left", "apex", 2e8, 1.2e-3) { YieldStress = -1, SecondMoment = -1, EffectiveLengthFactor = 0 });
        var paths = ModelValidator.Validate(def).Select(f => f.FieldPath).ToList();
        Assert.Contains("bars[0].yield_stress", paths);
        Assert.Contains("bars[0].second_moment", paths);
        Assert.Contains("bars[0].effective_length_factor", paths);
        Assert.All(ModelValidator.Validate(def), f => Assert.Equal(FindingCode.MemberPropertyOutOfRange, f.Code));
    }

    [Fact]
    public void Unknown_bar_behavior_is_rejected()
    {
        var def = WithBar(new("bar-L", "left", "apex", 2e8, 1.2e-3) { Behavior = (Elements.BarBehavior)9 });
        var f = Assert.Single(ModelValidator.Validate(def), x => x.FieldPath == "bars[0].behavior");
        Assert.Equal("bar-L", f.ItemId);
        Assert.Equal(FindingCode.UnknownOption, f.Code);
    }

    [Fact]
    public void Branch_switching_needs_arc_length_and_sane_numbers()
    {
        var model = StructuralModel.Create(TestModels.TwoBarTruss(4, 0.35, 2.4e5, 10));
        var controls = new SolverControls { Method = ContinuationMethod.LoadControl, SwitchBranches = true, SecondaryBranchPoints = 0, BranchPerturbation = double.NaN };
        var paths = controls.Validate(model).Select(f => f.FieldPath).ToList();
        Assert.Contains("controls.switch_branches", paths);
        Assert.Contains("controls.secondary_branch_points", paths);
        Assert.Contains("controls.branch_perturbation", paths);
    }

    [Fact]
    public void A_negative_limit_of_located_critical_points_is_refused_and_zero_is_allowed()
    {
        var model = StructuralModel.Create(TestModels.TwoBarTruss(4, 0.35, 2.4e5, 10));
        var f = Assert.Single(new SolverControls { MaxLocatedCriticalPoints = -1 }.Validate(model));
        Assert.Equal("controls.max_located_critical_points", f.FieldPath);
        Assert.Equal(FindingCode.ControlOutOfRange, f.Code);
        Assert.Contains("-1", f.Message);
        Assert.Empty(new SolverControls { MaxLocatedCriticalPoints = 0 }.Validate(model));
    }
}
