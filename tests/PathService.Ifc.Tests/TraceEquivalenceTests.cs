using PathService.Contracts.Mapping;
using PathService.Contracts.V1;
using PathService.Engine.Continuation;
using CriticalPoint = PathService.Engine.Continuation.CriticalPoint;
using SolverControls = PathService.Engine.Continuation.SolverControls;
using ContinuationMethod = PathService.Engine.Continuation.ContinuationMethod;
using PathService.Engine.Model;
using PathService.Ifc.Mapping;
using PathService.Ifc.Writing;

namespace PathService.Ifc.Tests;

/// <summary>
/// The same structure traced from the messages and from its IFC file (written in N and mm, read back in kN and m)
/// reaches the same first critical load factor λ_cr. The engine is referenced by this test project only.
/// </summary>
public class TraceEquivalenceTests
{
    internal static CriticalPoint FirstCritical(StructureModel m, LoadCase l)
    {
        var model = StructuralModel.Create(ModelMapper.ToDefinition(m, l));
        var controls = new SolverControls
        {
            Method = ContinuationMethod.ArcLength,
            InitialLoadIncrement = 5,
            MaxPoints = 400,
            StopAtFirstCriticalPoint = true,
            CriticalPointTolerance = 1e-10,
            ResidualTolerance = 1e-10,
        };
        var events = new PathTracer(model, controls).Trace().ToList();
        return events.OfType<CriticalPoint>().First();
    }

    [Fact]
    public void The_imported_roof_traces_to_the_same_critical_load_factor_as_the_roof_read_from_JSON()
    {
        var (m, l) = TestStructures.TrussedRoof();
        // The direct path goes through the contract's JSON mapping, as a request file would.
        var fromJson = Google.Protobuf.JsonParser.Default.Parse<StructureModel>(Google.Protobuf.JsonFormatter.Default.Format(m));
        var loadsFromJson = Google.Protobuf.JsonParser.Default.Parse<LoadCase>(Google.Protobuf.JsonFormatter.Default.Format(l));
        var direct = FirstCritical(fromJson, loadsFromJson);
        var (mm, lmm) = ModelComparison.InNewtonsAndMillimetres(m, l);
        var imported = IfcText.Import(IfcExport.WriteToString(mm, lmm).Text);
        Assert.Empty(imported.Findings);
        var viaIfc = FirstCritical(imported.Model, imported.LoadCase);

        Assert.True(direct.Located && viaIfc.Located);
        Assert.Equal(direct.Kind, viaIfc.Kind);
        // The inputs differ by unit conversion rounding only (about 1e-16 relative); λ_cr is located to 1e-10.
        double relative = Math.Abs(direct.LoadFactor - viaIfc.LoadFactor) / direct.LoadFactor;
        Assert.True(relative < 1e-9, $"λ_cr {direct.LoadFactor} from messages, {viaIfc.LoadFactor} via IFC (relative {relative:E2})");
    }
}
