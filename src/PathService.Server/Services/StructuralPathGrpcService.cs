using System.Diagnostics;
using Grpc.Core;
using PathService.Contracts.V1;
using PathService.Engine.Analyses;
using PathService.Engine.Model;
using PathService.Server.Errors;
using PathService.Server.Limits;
using PathService.Contracts.Mapping;
using PathService.Server.Telemetry;
using FindingSeverity = PathService.Engine.Model.FindingSeverity;

namespace PathService.Server.Services;

/// <summary>
/// The gRPC surface. Thin on purpose: limits, mapping, the engine call and error translation; the streaming
/// mechanics live in <see cref="TraceStreamer"/>.
/// </summary>
public sealed class StructuralPathGrpcService(
    RequestLimits limits, AnalysisGate gate, PathServiceTelemetry telemetry, TraceStreamer streamer,
    ILogger<StructuralPathGrpcService> logger) : StructuralPathService.StructuralPathServiceBase
{
    public override Task TracePath(TracePathRequest request, IServerStreamWriter<TracePathResponse> responseStream, ServerCallContext context) =>
        RunAnalysis("TracePath", request.Model, async () =>
        {
            limits.CheckControls(request.Controls);
            var model = BuildModel(request.Model, request.LoadCase, request.Imperfection);
            var controls = ControlsMapper.ToControls(request.Controls, limits.DefaultMaxPoints, limits.MaxTraceTime);
            var summary = await streamer.StreamAsync(model, controls, responseStream, context.CancellationToken);
            if (summary is null) return "Cancelled";
            logger.LogInformation(
                "Trace ended {StopReason} after {Points} points, {Steps} steps, {Iterations} iterations, {Cuts} cuts, {CriticalPoints} critical points; max load factor {MaxLoadFactor}, wall time {WallTimeMs} ms",
                summary.Reason, summary.Points, summary.Steps, summary.Iterations, summary.Cuts, summary.CriticalPoints.Count,
                summary.MaxLoadFactor, summary.WallTime.TotalMilliseconds);
            return summary.Reason.ToString();
        });

    public override Task<CheckModelResponse> CheckModel(CheckModelRequest request, ServerCallContext context)
    {
        // Validation only: cheap, so it takes no analysis slot and is not counted as an analysis.
        limits.CheckModelSize(request.Model);
        var definition = ModelMapper.ToDefinition(request.Model, request.LoadCase);
        var findings = ModelValidator.Validate(definition).ToList();
        if (request.Controls is not null && findings.All(f => f.Severity != FindingSeverity.Error))
        {
            var model = StructuralModel.Create(definition);
            findings.AddRange(ControlsMapper.ToControls(request.Controls, limits.DefaultMaxPoints, limits.MaxTraceTime).Validate(model));
        }
        var response = new CheckModelResponse
        {
            Valid = findings.All(f => f.Severity != FindingSeverity.Error),
            Units = ModelMapper.ToUnits(definition.Units),
        };
        response.Findings.AddRange(findings.Select(ResultMapper.ToFinding));
        logger.LogInformation("Model check: {Errors} errors, {Warnings} warnings",
            findings.Count(f => f.Severity == FindingSeverity.Error), findings.Count(f => f.Severity == FindingSeverity.Warning));
        return Task.FromResult(response);
    }

    public override async Task<AnalyzeLinearResponse> AnalyzeLinear(AnalyzeLinearRequest request, ServerCallContext context)
    {
        AnalyzeLinearResponse? response = null;
        await RunAnalysis("AnalyzeLinear", request.Model, () =>
        {
            double lf = request.HasLoadFactor ? request.LoadFactor : 1.0;
            if (!double.IsFinite(lf)) throw RpcErrors.InvalidField("load_factor", $"load_factor is {lf}; it must be finite");
            var model = BuildModel(request.Model, request.LoadCase);
            var result = LinearStaticAnalysis.Run(model, lf);
            var mapper = new ResultMapper(model, []);
            response = new AnalyzeLinearResponse
            {
                LoadFactor = result.LoadFactor,
                State = mapper.ToState(result.Displacements, result.BarForces, null, result.Reactions),
                Units = ModelMapper.ToUnits(model.Units),
            };
            response.Warnings.AddRange(model.Warnings.Select(ResultMapper.ToFinding));
            return Task.FromResult("Solved");
        });
        return response!;
    }

    public override async Task<FindBucklingModesResponse> FindBucklingModes(FindBucklingModesRequest request, ServerCallContext context)
    {
        FindBucklingModesResponse? response = null;
        await RunAnalysis("FindBucklingModes", request.Model, () =>
        {
            int count = request.HasModeCount ? request.ModeCount : 3;
            if (count < 1 || count > limits.Values.MaxBucklingModes)
                throw RpcErrors.InvalidField("mode_count", $"mode_count is {count}; it must be 1..{limits.Values.MaxBucklingModes}");
            var model = BuildModel(request.Model, request.LoadCase);
            LinearBucklingResult result;
            try { result = LinearBucklingAnalysis.Run(model, count); }
            catch (ArgumentOutOfRangeException ex) { throw RpcErrors.InvalidField("mode_count", ex.Message); }
            catch (InvalidOperationException ex) { throw RpcErrors.Precondition("UNSTABLE_START", ex.Message); }
            var mapper = new ResultMapper(model, []);
            response = new FindBucklingModesResponse { Iterations = result.Iterations, Converged = result.Converged, Units = ModelMapper.ToUnits(model.Units) };
            response.Modes.AddRange(result.Modes.Select(mapper.ToMode));
            return Task.FromResult(result.Converged ? "Converged" : "NotConverged");
        });
        return response!;
    }

    /// <summary>
    /// Common frame of every analysis: one span, the started/completed/failed counters, the size limits, an analysis
    /// slot, and the translation of engine exceptions into status codes. <paramref name="body"/> returns the outcome tag.
    /// </summary>
    private async Task RunAnalysis(string rpc, StructureModel? model, Func<Task<string>> body)
    {
        using var activity = PathServiceTelemetry.Source.StartActivity($"pathservice.{rpc}", ActivityKind.Internal);
        activity?.SetTag("pathservice.nodes", model?.Nodes.Count ?? 0);
        activity?.SetTag("pathservice.bars", model?.Bars.Count ?? 0);
        var rpcTag = new KeyValuePair<string, object?>("rpc", rpc);
        telemetry.AnalysesStarted.Add(1, rpcTag);
        using var scope = logger.BeginScope(new Dictionary<string, object?>
        {
            ["Rpc"] = rpc,
            ["ModelName"] = Truncate(model?.Name),
            ["Nodes"] = model?.Nodes.Count ?? 0,
            ["Bars"] = model?.Bars.Count ?? 0,
        });
        try
        {
            limits.CheckModelSize(model);
            using var lease = gate.TryEnter() ?? throw RpcErrors.Busy(gate.Capacity, TimeSpan.FromSeconds(limits.Values.RetryAfterSeconds));
            telemetry.AnalysesActive.Add(1);
            string outcome;
            try { outcome = await body(); }
            finally { telemetry.AnalysesActive.Add(-1); }
            telemetry.AnalysesCompleted.Add(1, rpcTag, new("outcome", outcome));
            activity?.SetTag("pathservice.outcome", outcome);
        }
        catch (Exception ex)
        {
            var rpcEx = Translate(ex);
            string reason = rpcEx?.StatusCode.ToString() ?? ex.GetType().Name;
            telemetry.AnalysesFailed.Add(1, rpcTag, new("reason", reason));
            activity?.SetStatus(ActivityStatusCode.Error, reason);
            if (rpcEx is null) { logger.LogError(ex, "{Rpc} failed unexpectedly", rpc); throw; }
            if (rpcEx.StatusCode is StatusCode.Cancelled or StatusCode.DeadlineExceeded)
                logger.LogInformation("{Rpc} cancelled by the caller", rpc);
            else
                logger.LogInformation("{Rpc} refused with {StatusCode}: {Detail}", rpc, rpcEx.StatusCode, rpcEx.Status.Detail);
            if (ReferenceEquals(rpcEx, ex)) throw;
            throw rpcEx;
        }
    }

    /// <summary>Maps a failure to the status the caller should see; null for a genuine server fault (then INTERNAL).</summary>
    private static RpcException? Translate(Exception ex) => ex switch
    {
        RpcException r => r,
        ModelValidationException v => RpcErrors.Invalid(v.Findings),
        MechanismException m => RpcErrors.Mechanism(m),
        OperationCanceledException => new RpcException(new Status(StatusCode.Cancelled, "the call was cancelled")),
        _ => null,
    };

    private static StructuralModel BuildModel(StructureModel? proto, LoadCase? loads, Imperfection? imperfection = null)
    {
        var definition = ModelMapper.ToDefinition(proto, loads);
        var findings = ModelValidator.Validate(definition);
        if (findings.Any(f => f.Severity == FindingSeverity.Error)) throw RpcErrors.Invalid(findings);
        return StructuralModel.Create(ImperfectionMapper.Apply(definition, imperfection));
    }

    private static string Truncate(string? s) => s is null ? "" : s.Length <= 64 ? s : s[..64];
}
