using PathService.Contracts.V1;

namespace PathService.Client.Building;

/// <summary>
/// Builds a <see cref="StructureModel"/> and its <see cref="LoadCase"/> in code, for plug-ins that turn their own
/// geometry into a request. It checks nothing the service checks (the service answers with every finding and its
/// field path); it only refuses what cannot be expressed at all, such as a node id used twice.
/// </summary>
public sealed class ModelBuilder
{
    private readonly StructureModel _model;
    private readonly LoadCase _loads = new();
    private readonly HashSet<string> _nodeIds = new(StringComparer.Ordinal);

    /// <param name="forceUnit">Force unit label echoed in results (the service does not convert units).</param>
    /// <param name="lengthUnit">Length unit label echoed in results.</param>
    public ModelBuilder(string name, string forceUnit = "kN", string lengthUnit = "m")
    {
        _model = new StructureModel { Name = name, Units = new UnitLabels { Force = forceUnit, Length = lengthUnit } };
    }

    public ModelBuilder Node(string id, double x, double y, double z)
    {
        if (!_nodeIds.Add(id)) throw new ArgumentException($"node id '{id}' is used twice", nameof(id));
        _model.Nodes.Add(new Node { Id = id, X = x, Y = y, Z = z });
        return this;
    }

    /// <summary>A pin-ended bar; <paramref name="configure"/> sets the optional fields (behavior, density, yield stress, ...).</summary>
    public ModelBuilder Bar(string id, string startNode, string endNode, double elasticModulus, double area, Action<Bar>? configure = null)
    {
        var bar = new Bar { Id = id, StartNode = startNode, EndNode = endNode, ElasticModulus = elasticModulus, Area = area };
        configure?.Invoke(bar);
        _model.Bars.Add(bar);
        return this;
    }

    /// <summary>
    /// A beam-column of a rigid-jointed frame with the given section; <paramref name="orientation"/> (global components,
    /// not along the member) fixes its local y axis. <paramref name="configure"/> sets the optional fields (releases,
    /// subdivisions, bow imperfection); by default both ends are rigid and the member is one straight element.
    /// </summary>
    public ModelBuilder Beam(string id, string startNode, string endNode, BeamSection section, (double X, double Y, double Z) orientation, Action<Beam>? configure = null)
    {
        var beam = new Beam
        {
            Id = id, StartNode = startNode, EndNode = endNode,
            ElasticModulus = section.ElasticModulus, ShearModulus = section.ShearModulus, Area = section.Area,
            SecondMomentY = section.SecondMomentY, SecondMomentZ = section.SecondMomentZ, TorsionConstant = section.TorsionConstant,
            Orientation = new OrientationVector { X = orientation.X, Y = orientation.Y, Z = orientation.Z },
        };
        configure?.Invoke(beam);
        _model.Beams.Add(beam);
        return this;
    }

    /// <summary>End releases of a beam (for <see cref="Beam"/>'s configure): true releases that rotation.</summary>
    public static BeamEndReleases Releases(bool torsion = false, bool bendingY = false, bool bendingZ = false) =>
        new() { Torsion = torsion, BendingY = bendingY, BendingZ = bendingZ };

    /// <summary>A beam end hinged for bending about both local axes that still holds torsion.</summary>
    public static BeamEndReleases BendingHinge => Releases(bendingY: true, bendingZ: true);

    /// <summary>Adds the nodes and bars of a <see cref="SegmentMesh"/> (see <see cref="SegmentMesher"/>).</summary>
    public ModelBuilder Mesh(SegmentMesh mesh)
    {
        foreach (var n in mesh.Nodes) Node(n.Id, n.X, n.Y, n.Z);
        _model.Bars.AddRange(mesh.Bars.Select(b => b.Clone()));
        return this;
    }

    /// <summary>Restrains the node in the given directions (all three when none are given) at zero displacement.</summary>
    public ModelBuilder Support(string node, params Direction[] directions)
    {
        foreach (var d in directions.Length == 0 ? [Direction.X, Direction.Y, Direction.Z] : directions)
            _model.Supports.Add(new Support { Node = node, Direction = d });
        return this;
    }

    /// <summary>Restrains all six directions of the node (translations and rotations) at zero: a fixed support. The
    /// rotations need a beam end holding a rotation at the node, else the service ignores them with a warning.</summary>
    public ModelBuilder Fixed(string node) =>
        Support(node, Direction.X, Direction.Y, Direction.Z, Direction.RotationX, Direction.RotationY, Direction.RotationZ);

    /// <summary>A prescribed displacement (length unit; radians for a rotation) of one direction of a node.</summary>
    public ModelBuilder PrescribedDisplacement(string node, Direction direction, double displacement)
    {
        _model.Supports.Add(new Support { Node = node, Direction = direction, PrescribedDisplacement = displacement });
        return this;
    }

    /// <summary>An elastic support of one direction of a node (force/length; force·length per radian for a rotation).</summary>
    public ModelBuilder GroundSpring(string id, string node, Direction direction, double stiffness)
    {
        _model.GroundSprings.Add(new GroundSpring { Id = id, Node = node, Direction = direction, Stiffness = stiffness });
        return this;
    }

    /// <summary>An elastic restraint of one rotation of a node (force·length per radian); the node needs rotational unknowns.</summary>
    public ModelBuilder RotationalSpring(string id, string node, Direction rotation, double stiffness)
    {
        if (rotation is not (Direction.RotationX or Direction.RotationY or Direction.RotationZ))
            throw new ArgumentException($"a rotational spring needs a rotation direction, not {rotation}", nameof(rotation));
        return GroundSpring(id, node, rotation, stiffness);
    }

    /// <summary>A moment about the global axes scaled by the load factor λ (force·length); the node needs rotational unknowns.</summary>
    public ModelBuilder ReferenceMoment(string node, double mx, double my, double mz)
    {
        _loads.Reference.Add(new NodalLoad { Node = node, Mx = mx, My = my, Mz = mz });
        return this;
    }

    /// <summary>A moment about the global axes applied in full before tracing starts (force·length).</summary>
    public ModelBuilder ConstantMoment(string node, double mx, double my, double mz)
    {
        _loads.Constant.Add(new NodalLoad { Node = node, Mx = mx, My = my, Mz = mz });
        return this;
    }

    /// <summary>A load scaled by the load factor λ (force unit).</summary>
    public ModelBuilder ReferenceLoad(string node, double fx, double fy, double fz)
    {
        _loads.Reference.Add(new NodalLoad { Node = node, Fx = fx, Fy = fy, Fz = fz });
        return this;
    }

    /// <summary>A load applied in full before tracing starts (force unit).</summary>
    public ModelBuilder ConstantLoad(string node, double fx, double fy, double fz)
    {
        _loads.Constant.Add(new NodalLoad { Node = node, Fx = fx, Fy = fy, Fz = fz });
        return this;
    }

    /// <summary>A copy of the model built so far.</summary>
    public StructureModel BuildModel() => _model.Clone();

    /// <summary>A copy of the load case built so far.</summary>
    public LoadCase BuildLoadCase() => _loads.Clone();

    /// <summary>A trace request of the model and load case; unset controls take the service's documented defaults.</summary>
    public TracePathRequest TraceRequest(SolverControls? controls = null) =>
        new() { Model = BuildModel(), LoadCase = BuildLoadCase(), Controls = controls ?? new SolverControls() };

    public CheckModelRequest CheckRequest() => new() { Model = BuildModel(), LoadCase = BuildLoadCase() };

    public AnalyzeLinearRequest LinearRequest(double loadFactor = 1) => new() { Model = BuildModel(), LoadCase = BuildLoadCase(), LoadFactor = loadFactor };
}
