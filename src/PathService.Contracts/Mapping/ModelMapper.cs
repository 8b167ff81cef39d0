using PathService.Contracts.V1;
using PathService.Engine.Model;
using Axis = PathService.Engine.Model.Axis;
using UnitLabels = PathService.Engine.Model.UnitLabels;

namespace PathService.Contracts.Mapping;

/// <summary>
/// Proto model and load case → engine definitions. The mapping is literal: every check is left to the engine's
/// validator so that a client gets all findings at once, with the engine's wording, for proto and engine callers alike.
/// </summary>
public static class ModelMapper
{
    /// <summary>Stands for DIRECTION_UNSPECIFIED; the engine reports it as a direction that is not set.</summary>
    public const Axis NoAxis = (Axis)int.MinValue;

    /// <summary>
    /// An unknown enum number is passed on as the number itself (unknown proto numbers are never 0..6, so they cannot
    /// alias an engine axis 0..5), so that the validator's message shows the value the caller sent.
    /// </summary>
    public static Axis ToAxis(Direction d) => d switch
    {
        Direction.X => Axis.X,
        Direction.Y => Axis.Y,
        Direction.Z => Axis.Z,
        Direction.RotationX => Axis.RotationX,
        Direction.RotationY => Axis.RotationY,
        Direction.RotationZ => Axis.RotationZ,
        Direction.Unspecified => NoAxis,
        _ => (Axis)(int)d,
    };

    public static Direction ToDirection(Axis a) => a switch
    {
        Axis.X => Direction.X,
        Axis.Y => Direction.Y,
        Axis.Z => Direction.Z,
        Axis.RotationX => Direction.RotationX,
        Axis.RotationY => Direction.RotationY,
        Axis.RotationZ => Direction.RotationZ,
        _ => Direction.Unspecified,
    };

    public static DofReference? ToDof(DofRef? d) => d is null ? null : new DofReference(d.Node, ToAxis(d.Direction));

    public static ModelDefinition ToDefinition(StructureModel? model, LoadCase? loads)
    {
        model ??= new StructureModel();
        loads ??= new LoadCase();
        var defaults = new UnitLabels();
        return new ModelDefinition
        {
            Name = string.IsNullOrWhiteSpace(model.Name) ? "model" : model.Name,
            Units = new UnitLabels(
                string.IsNullOrWhiteSpace(model.Units?.Force) ? defaults.Force : model.Units.Force,
                string.IsNullOrWhiteSpace(model.Units?.Length) ? defaults.Length : model.Units.Length),
            Nodes = model.Nodes.Select(n => new NodeDefinition(n.Id, n.X, n.Y, n.Z)).ToArray(),
            Bars = model.Bars.Select(b => new BarDefinition(b.Id, b.StartNode, b.EndNode, b.ElasticModulus, b.Area, b.InitialStress)
            {
                Density = b.Density,
                Behavior = b.Behavior switch
                {
                    BarBehavior.Unspecified or BarBehavior.TensionAndCompression => Engine.Elements.BarBehavior.Elastic,
                    BarBehavior.TensionOnly => Engine.Elements.BarBehavior.TensionOnly,
                    BarBehavior.CompressionOnly => Engine.Elements.BarBehavior.CompressionOnly,
                    _ => (Engine.Elements.BarBehavior)(int)b.Behavior, // the number sent (never 0..3): reported by the validator
                },
                YieldStress = b.YieldStress,
                SecondMoment = b.SecondMoment,
                EffectiveLengthFactor = b.HasEffectiveLengthFactor ? b.EffectiveLengthFactor : 1.0,
            }).ToArray(),
            Beams = model.Beams.Select(BeamMapper.ToDefinition).ToArray(),
            GroundSprings = model.GroundSprings.Select(s => new GroundSpringDefinition(s.Id, s.Node, ToAxis(s.Direction), s.Stiffness)).ToArray(),
            LinkSprings = model.LinkSprings.Select(s => new LinkSpringDefinition(s.Id, s.StartNode, s.EndNode, ToAxis(s.Direction), s.Stiffness)).ToArray(),
            Supports = model.Supports.Select(s => new SupportDefinition(s.Node, ToAxis(s.Direction), s.PrescribedDisplacement)).ToArray(),
            Loads = new LoadCaseDefinition(
                loads.Constant.Select(ToLoad).ToArray(),
                loads.Reference.Select(ToLoad).ToArray()),
            LoadSets = loads.LoadSets.Select(p => new Engine.Model.LoadSet(p.Name, p.Loads.Select(ToLoad).ToArray(), p.SelfWeight)).ToArray(),
            Combination = loads.Combination is { } c
                ? new Engine.Model.LoadCombination(c.Name, c.Constant.Select(f => new Engine.Model.LoadSetFactor(f.LoadSet, f.Factor)).ToArray(), c.Reference.Select(f => new Engine.Model.LoadSetFactor(f.LoadSet, f.Factor)).ToArray())
                : null,
            Gravity = loads.Gravity is { } g ? (g.X, g.Y, g.Z) : (0, 0, -9.81),
        };
    }

    public static Contracts.V1.UnitLabels ToUnits(UnitLabels u) => new() { Force = u.Force, Length = u.Length };

    public static Engine.Model.NodalLoad ToLoad(Contracts.V1.NodalLoad l) => new(l.Node, l.Fx, l.Fy, l.Fz) { Mx = l.Mx, My = l.My, Mz = l.Mz };

    /// <summary>The message of an engine nodal load (forces and moments).</summary>
    public static Contracts.V1.NodalLoad ToMessage(Engine.Model.NodalLoad l) => new() { Node = l.Node, Fx = l.Fx, Fy = l.Fy, Fz = l.Fz, Mx = l.Mx, My = l.My, Mz = l.Mz };
}
