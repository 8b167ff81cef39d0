namespace PathService.Engine.Model;

/// <summary>
/// The validated, immutable structure in array form: what the numerical code reads. Built once per request
/// from a <see cref="ModelDefinition"/>; the caller's string ids are kept so every result can echo them.
/// </summary>
public sealed class StructuralModel
{
    public ModelDefinition Definition { get; }
    public string Name => Definition.Name;
    public UnitLabels Units => Definition.Units;
    /// <summary>Number of nodes, the generated intermediate nodes of subdivided beams included (they come last).</summary>
    public int NodeCount { get; }
    /// <summary>Number of nodes the definition gives (indices 0..DefinedNodeCount-1 follow its order).</summary>
    public int DefinedNodeCount { get; }
    public string[] NodeIds { get; }
    /// <summary>Initial coordinates, 3 per node (x, y, z), whatever the node's unknowns.</summary>
    public double[] Coordinates { get; }

    public int BarCount { get; }
    public string[] BarIds { get; }
    public int[] BarStart { get; }
    public int[] BarEnd { get; }
    public double[] BarModulus { get; }
    public double[] BarArea { get; }
    public double[] BarInitialStress { get; }
    public double[] BarLength { get; }
    public Elements.BarBehavior[] BarBehavior { get; }
    public double[] BarYieldStress { get; }
    public double[] BarSecondMoment { get; }
    public double[] BarEffectiveLengthFactor { get; }
    /// <summary>Whether any bar is tension- or compression-only or can yield (the material law then matters).</summary>
    public bool HasMemberLaws { get; }
    /// <summary>Whether any bar asks for a member check (yield stress or second moment of area given).</summary>
    public bool HasMemberChecks { get; }

    /// <summary>The beam elements (after subdivision); empty for a model of bars and springs.</summary>
    public BeamElements Beams { get; }
    public bool HasBeams => Beams.Count > 0;

    public string[] GroundSpringIds { get; }
    public int[] GroundSpringDof { get; }
    public double[] GroundSpringStiffness { get; }

    public string[] LinkSpringIds { get; }
    public int[] LinkSpringStartDof { get; }
    public int[] LinkSpringEndDof { get; }
    public double[] LinkSpringStiffness { get; }

    public DofMap Dofs { get; }
    /// <summary>Prescribed displacements (and rotations) in the full vector (zero where free or plainly supported).</summary>
    public double[] PrescribedDisplacement { get; }
    /// <summary>Constant load (forces and, at rotating nodes, moments), full vector.</summary>
    public double[] ConstantLoad { get; }
    /// <summary>Reference load scaled by λ, full vector.</summary>
    public double[] ReferenceLoad { get; }
    public IReadOnlyList<ValidationFinding> Warnings { get; }

    private readonly Dictionary<string, int> _nodeIndex;

    private StructuralModel(ModelDefinition def, IReadOnlyList<ValidationFinding> warnings)
    {
        Definition = def;
        Warnings = warnings;
        _nodeIndex = new Dictionary<string, int>(StringComparer.Ordinal);
        var nodeIds = new List<string>(def.Nodes.Count);
        var coordinates = new List<double>(3 * def.Nodes.Count);
        foreach (var nd in def.Nodes)
        {
            _nodeIndex[nd.Id] = nodeIds.Count;
            nodeIds.Add(nd.Id);
            coordinates.Add(nd.X); coordinates.Add(nd.Y); coordinates.Add(nd.Z);
        }
        // Subdivided beams append their intermediate nodes after the defined ones.
        Beams = new BeamElements(def, _nodeIndex, nodeIds, coordinates);
        DefinedNodeCount = def.Nodes.Count;
        NodeCount = nodeIds.Count;
        NodeIds = nodeIds.ToArray();
        Coordinates = coordinates.ToArray();

        BarCount = def.Bars.Count;
        BarIds = def.Bars.Select(b => b.Id).ToArray();
        BarStart = def.Bars.Select(b => _nodeIndex[b.StartNode]).ToArray();
        BarEnd = def.Bars.Select(b => _nodeIndex[b.EndNode]).ToArray();
        BarModulus = def.Bars.Select(b => b.ElasticModulus).ToArray();
        BarArea = def.Bars.Select(b => b.Area).ToArray();
        BarInitialStress = def.Bars.Select(b => b.InitialStress).ToArray();
        BarBehavior = def.Bars.Select(b => b.Behavior).ToArray();
        BarYieldStress = def.Bars.Select(b => b.YieldStress).ToArray();
        BarSecondMoment = def.Bars.Select(b => b.SecondMoment).ToArray();
        BarEffectiveLengthFactor = def.Bars.Select(b => b.EffectiveLengthFactor).ToArray();
        HasMemberLaws = def.Bars.Any(b => b.Behavior != Elements.BarBehavior.Elastic || b.YieldStress > 0);
        HasMemberChecks = HasMemberLaws || def.Bars.Any(b => b.SecondMoment > 0);
        BarLength = new double[BarCount];
        for (int b = 0; b < BarCount; b++)
        {
            double s = 0;
            for (int k = 0; k < 3; k++)
            {
                double d = Coordinates[3 * BarEnd[b] + k] - Coordinates[3 * BarStart[b] + k];
                s += d * d;
            }
            BarLength[b] = Math.Sqrt(s);
        }

        // The DOF rule (DofMap): a node rotates iff a beam element end holding a rotation connects to it.
        var rotating = new bool[NodeCount];
        for (int e = 0; e < Beams.Count; e++)
        {
            if (Beams.StartHoldsRotation(e)) rotating[Beams.Start[e]] = true;
            if (Beams.EndHoldsRotation(e)) rotating[Beams.End[e]] = true;
        }
        var restrained = new List<int>();
        var prescribed = new List<(int Node, Axis Axis, double Value)>();
        foreach (var s in def.Supports)
        {
            int node = _nodeIndex[s.Node];
            if ((int)s.Direction >= 3 && !rotating[node]) continue; // no rotational unknowns there (a validation warning says so)
            prescribed.Add((node, s.Direction, s.PrescribedDisplacement));
        }
        int[] offsets = new int[NodeCount + 1];
        for (int n = 0; n < NodeCount; n++) offsets[n + 1] = offsets[n] + (rotating[n] ? 6 : 3);
        foreach (var (node, axis, _) in prescribed) restrained.Add(offsets[node] + (int)axis);
        Dofs = new DofMap(rotating, restrained);
        PrescribedDisplacement = new double[Dofs.FullCount];
        foreach (var (node, axis, value) in prescribed) PrescribedDisplacement[Dofs.Full(node, axis)] = value;

        GroundSpringIds = def.GroundSprings.Select(s => s.Id).ToArray();
        GroundSpringDof = def.GroundSprings.Select(s => Dofs.Full(_nodeIndex[s.Node], s.Direction)).ToArray();
        GroundSpringStiffness = def.GroundSprings.Select(s => s.Stiffness).ToArray();
        LinkSpringIds = def.LinkSprings.Select(s => s.Id).ToArray();
        LinkSpringStartDof = def.LinkSprings.Select(s => Dofs.Full(_nodeIndex[s.StartNode], s.Direction)).ToArray();
        LinkSpringEndDof = def.LinkSprings.Select(s => Dofs.Full(_nodeIndex[s.EndNode], s.Direction)).ToArray();
        LinkSpringStiffness = def.LinkSprings.Select(s => s.Stiffness).ToArray();

        (ConstantLoad, ReferenceLoad) = LoadCombiner.Resolve(def, id => _nodeIndex[id], BarLength, Dofs);
    }

    /// <summary>Validates and builds. Throws <see cref="ModelValidationException"/> with every error found.</summary>
    public static StructuralModel Create(ModelDefinition definition)
    {
        var findings = ModelValidator.Validate(definition);
        var errors = findings.Where(f => f.Severity == FindingSeverity.Error).ToList();
        if (errors.Count > 0) throw new ModelValidationException(errors);
        return new StructuralModel(definition, findings);
    }

    public bool TryGetNode(string id, out int index) => _nodeIndex.TryGetValue(id, out index);

    /// <summary>Index of a node id; throws <see cref="ArgumentException"/> naming the id when unknown.</summary>
    public int NodeIndex(string id) =>
        _nodeIndex.TryGetValue(id, out int i) ? i : throw new ArgumentException($"node '{id}' is not defined in model '{Name}'", nameof(id));

    /// <summary>Full DOF index of a (node, axis) reference.</summary>
    public int FullDof(DofReference dof) => Dofs.Full(NodeIndex(dof.Node), dof.Direction);

    /// <summary>Node id and direction of a full DOF index.</summary>
    public (string Node, Axis Direction) DescribeDof(int fullDof)
    {
        var (node, axis) = Dofs.Describe(fullDof);
        return (NodeIds[node], axis);
    }

    public bool HasPrescribedDisplacements => PrescribedDisplacement.Any(v => v != 0);
    public bool HasConstantLoad => ConstantLoad.Any(v => v != 0);
    public bool HasInitialStress => BarInitialStress.Any(v => v != 0);
}
