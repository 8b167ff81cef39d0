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
    public int NodeCount { get; }
    public string[] NodeIds { get; }
    /// <summary>Initial coordinates, 3 per node (x, y, z).</summary>
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

    public string[] GroundSpringIds { get; }
    public int[] GroundSpringDof { get; }
    public double[] GroundSpringStiffness { get; }

    public string[] LinkSpringIds { get; }
    public int[] LinkSpringStartDof { get; }
    public int[] LinkSpringEndDof { get; }
    public double[] LinkSpringStiffness { get; }

    public DofMap Dofs { get; }
    /// <summary>Prescribed displacements in the full vector (zero where free or plainly supported).</summary>
    public double[] PrescribedDisplacement { get; }
    /// <summary>Constant load, full vector.</summary>
    public double[] ConstantLoad { get; }
    /// <summary>Reference load scaled by λ, full vector.</summary>
    public double[] ReferenceLoad { get; }
    public IReadOnlyList<ValidationFinding> Warnings { get; }

    private readonly Dictionary<string, int> _nodeIndex;

    private StructuralModel(ModelDefinition def, IReadOnlyList<ValidationFinding> warnings)
    {
        Definition = def;
        Warnings = warnings;
        NodeCount = def.Nodes.Count;
        NodeIds = def.Nodes.Select(n => n.Id).ToArray();
        _nodeIndex = new Dictionary<string, int>(StringComparer.Ordinal);
        for (int i = 0; i < NodeCount; i++) _nodeIndex[NodeIds[i]] = i;
        Coordinates = new double[3 * NodeCount];
        for (int i = 0; i < NodeCount; i++)
        {
            Coordinates[3 * i] = def.Nodes[i].X;
            Coordinates[3 * i + 1] = def.Nodes[i].Y;
            Coordinates[3 * i + 2] = def.Nodes[i].Z;
        }

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

        GroundSpringIds = def.GroundSprings.Select(s => s.Id).ToArray();
        GroundSpringDof = def.GroundSprings.Select(s => DofMap.Full(_nodeIndex[s.Node], s.Direction)).ToArray();
        GroundSpringStiffness = def.GroundSprings.Select(s => s.Stiffness).ToArray();
        LinkSpringIds = def.LinkSprings.Select(s => s.Id).ToArray();
        LinkSpringStartDof = def.LinkSprings.Select(s => DofMap.Full(_nodeIndex[s.StartNode], s.Direction)).ToArray();
        LinkSpringEndDof = def.LinkSprings.Select(s => DofMap.Full(_nodeIndex[s.EndNode], s.Direction)).ToArray();
        LinkSpringStiffness = def.LinkSprings.Select(s => s.Stiffness).ToArray();

        PrescribedDisplacement = new double[3 * NodeCount];
        var restrained = new List<int>();
        foreach (var s in def.Supports)
        {
            if (ModelValidator.IsRotation(s.Direction)) continue; // no rotational unknowns yet (beams are wired next)
            int d = DofMap.Full(_nodeIndex[s.Node], s.Direction);
            restrained.Add(d);
            PrescribedDisplacement[d] = s.PrescribedDisplacement;
        }
        Dofs = new DofMap(NodeCount, restrained);
        (ConstantLoad, ReferenceLoad) = LoadCombiner.Resolve(def, id => _nodeIndex[id], BarLength);
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
    public int FullDof(DofReference dof) => DofMap.Full(NodeIndex(dof.Node), dof.Direction);

    /// <summary>Node id and direction of a full DOF index.</summary>
    public (string Node, Axis Direction) DescribeDof(int fullDof) => (NodeIds[fullDof / 3], (Axis)(fullDof % 3));

    public bool HasPrescribedDisplacements => PrescribedDisplacement.Any(v => v != 0);
    public bool HasConstantLoad => ConstantLoad.Any(v => v != 0);
    public bool HasInitialStress => BarInitialStress.Any(v => v != 0);
}
