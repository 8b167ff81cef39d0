using System.Runtime.CompilerServices;
using PathService.Contracts.Mapping;
using PathService.Contracts.V1;
using PathService.Engine.Analyses;
using PathService.Engine.Continuation;
using PathService.Engine.Model;
using PathService.Ifc.Mapping;
using PathService.Ifc.Step;

namespace PathService.Cli.Backends;

/// <summary>Runs the engine in this process through the same mapping the server uses: the one-machine default.</summary>
internal sealed class InProcessBackend : IAnalysisBackend
{
    public string Description => "in-process engine";

    public async IAsyncEnumerable<TracePathResponse> TraceAsync(TracePathRequest request, [EnumeratorCancellation] CancellationToken ct)
    {
        var (model, controls) = Build(request.Model, request.LoadCase, request.Controls);
        if (request.Imperfection is not null)
        {
            try { model = StructuralModel.Create(ImperfectionMapper.Apply(model.Definition, request.Imperfection)); }
            catch (ModelValidationException ex) { throw Rejected(ex); }
            catch (PathService.Engine.AnalysisInputException ex) { throw Input(ex); }
        }
        var mapper = new ResultMapper(model, controls.Monitored);
        IEnumerator<PathEvent> events;
        try { events = new PathTracer(model, controls).Trace(ct).GetEnumerator(); }
        catch (ModelValidationException ex) { throw Rejected(ex); }
        using (events)
        {
            while (true)
            {
                bool more;
                try { more = await Task.Run(events.MoveNext, CancellationToken.None); }
                catch (MechanismException ex) { throw Mechanism(ex); }
                if (!more) yield break;
                yield return mapper.ToResponse(events.Current);
            }
        }
    }

    public Task<CheckModelResponse> CheckAsync(CheckModelRequest request, CancellationToken ct) =>
        Task.FromResult(ModelCheck.Run(request, 100, null).Response);

    public Task<AnalyzeLinearResponse> LinearAsync(AnalyzeLinearRequest request, CancellationToken ct)
    {
        var (model, _) = Build(request.Model, request.LoadCase, null);
        try
        {
            double lf = request.HasLoadFactor ? request.LoadFactor : 1.0;
            var r = LinearStaticAnalysis.Run(model, lf);
            var response = new AnalyzeLinearResponse
            {
                LoadFactor = lf, Units = ModelMapper.ToUnits(model.Units),
                State = new ResultMapper(model, []).ToState(r.Displacements, r.BarForces, null, r.Reactions),
            };
            response.Warnings.AddRange(model.Warnings.Select(ResultMapper.ToFinding));
            response.SlackBars.AddRange(r.SlackBars);
            return Task.FromResult(response);
        }
        catch (MechanismException ex) { throw Mechanism(ex); }
        catch (PathService.Engine.AnalysisInputException ex) { throw Input(ex); }
    }

    public Task<FindBucklingModesResponse> BucklingAsync(FindBucklingModesRequest request, CancellationToken ct)
    {
        var (model, _) = Build(request.Model, request.LoadCase, null);
        try
        {
            var r = LinearBucklingAnalysis.Run(model, request.HasModeCount ? request.ModeCount : 3);
            var mapper = new ResultMapper(model, []);
            var response = new FindBucklingModesResponse { Iterations = r.Iterations, Converged = r.Converged, Units = ModelMapper.ToUnits(model.Units) };
            response.Modes.AddRange(r.Modes.Select(mapper.ToMode));
            return Task.FromResult(response);
        }
        catch (MechanismException ex) { throw Mechanism(ex); }
        catch (PathService.Engine.AnalysisInputException ex) { throw Input(ex); }
    }

    public async IAsyncEnumerable<SweepImperfectionsResponse> SweepAsync(SweepImperfectionsRequest request, [EnumeratorCancellation] CancellationToken ct)
    {
        var (model, controls) = Build(request.Model, request.LoadCase, request.Controls);
        var def = model.Definition;
        if (request.Imperfection is null || request.Amplitudes.Count == 0)
            throw new AnalysisRejectedException("a sweep needs an imperfection shape and at least one amplitude", []);
        IReadOnlyList<double[]> shapes; IReadOnlyList<double> weights; List<double> amplitudes;
        try
        {
            (shapes, weights) = ImperfectionMapper.Shapes(def, request.Imperfection);
            amplitudes = request.Amplitudes.Select((a, i) => ImperfectionMapper.ToLength(def, request.Imperfection, a, $"amplitudes[{i}]")).ToList();
        }
        catch (ModelValidationException ex) { throw Rejected(ex); }
        catch (PathService.Engine.AnalysisInputException ex) { throw Input(ex); }
        using var events = Engine.Stability.ImperfectionSweep.Run(def, controls, shapes, weights, amplitudes, ct).GetEnumerator();
        while (await Task.Run(events.MoveNext, CancellationToken.None))
            yield return ResultMapper.ToSweepResponse(events.Current);
    }

    public Task<ImportIfcModelResponse> ImportIfcAsync(ImportIfcModelRequest request, CancellationToken ct)
    {
        var options = new IfcImportOptions
        {
            AnalysisModel = NullIfEmpty(request.AnalysisModel),
            ReferenceLoadGroup = NullIfEmpty(request.ReferenceLoadGroup),
            ConstantLoadGroup = NullIfEmpty(request.ConstantLoadGroup),
            ForceUnit = NullIfEmpty(request.Units?.Force) ?? "kN",
            LengthUnit = NullIfEmpty(request.Units?.Length) ?? "m",
        };
        IfcImportResult r;
        try { r = IfcImport.Read(new MemoryStream(request.IfcFile.ToByteArray(), writable: false), options); }
        catch (StepFormatException ex)
        {
            throw new AnalysisRejectedException(ex.Message,
                [new Finding { Severity = Contracts.V1.FindingSeverity.Error, Code = ex.Code, Field = "ifc_file", Message = ex.Message }],
                resourceLimit: ex.Code == "FILE_TOO_LARGE");
        }
        catch (ArgumentException ex)
        {
            throw new AnalysisRejectedException(ex.Message, [new Finding { Severity = Contracts.V1.FindingSeverity.Error, Code = "IFC_OPTION_INVALID", Message = ex.Message }]);
        }
        var response = new ImportIfcModelResponse { Model = r.Model, LoadCase = r.LoadCase, UnitsNote = r.UnitsNote, Schema = r.Schema };
        response.Findings.AddRange(r.Findings);
        return Task.FromResult(response);
    }

    private static string? NullIfEmpty(string? s) => string.IsNullOrEmpty(s) ? null : s;

    public ValueTask DisposeAsync() => ValueTask.CompletedTask;

    private static (StructuralModel, Engine.Continuation.SolverControls) Build(StructureModel? m, LoadCase? loads, Contracts.V1.SolverControls? c)
    {
        try
        {
            var model = StructuralModel.Create(ModelMapper.ToDefinition(m, loads));
            var controls = ControlsMapper.ToControls(c, 100, null);
            var problems = c is null ? [] : controls.Validate(model);
            if (problems.Count > 0) throw new ModelValidationException(problems);
            return (model, controls);
        }
        catch (ModelValidationException ex) { throw Rejected(ex); }
    }

    private static AnalysisRejectedException Rejected(ModelValidationException ex) =>
        new($"the request is invalid ({ex.Findings.Count} finding(s))", ex.Findings.Select(ResultMapper.ToFinding).ToList());

    /// <summary>An input fault found while computing (no buckling mode, zero shape, an active set that cannot settle): its reason and field, as the server gives them.</summary>
    private static AnalysisRejectedException Input(PathService.Engine.AnalysisInputException ex) =>
        new(ex.Message, [new Finding { Severity = Contracts.V1.FindingSeverity.Error, Code = ex.Reason, Field = ex.Field, Message = ex.Message }]);

    private static AnalysisRejectedException Mechanism(MechanismException ex) =>
        new(ex.Message, [new Finding { Severity = Contracts.V1.FindingSeverity.Error, Code = "MECHANISM", Field = "model", ItemId = ex.NodeId, Message = ex.Message }]);
}
