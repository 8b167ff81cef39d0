using System.Diagnostics;
using System.Reflection;
using System.Security.Cryptography;
using Google.Protobuf;
using Grpc.Core;
using PathService.Contracts.V1;
using PathService.Engine.Analyses;
using PathService.Engine.Model;
using PathService.Server.Errors;
using PathService.Server.Limits;
using PathService.Contracts.Mapping;
using PathService.Server.Hosting;
using PathService.Server.Security;
using PathService.Server.Telemetry;
using PathService.Engine.Continuation;
using PathService.Ifc.Mapping;
using PathService.Ifc.Step;
using FindingSeverity = PathService.Engine.Model.FindingSeverity;

namespace PathService.Server.Services;

/// <summary>
/// The gRPC surface. Thin on purpose: limits, mapping, the engine call and error translation; the streaming
/// mechanics live in <see cref="TraceStreamer"/>.
/// </summary>
public sealed class StructuralPathGrpcService(
    RequestLimits limits, AnalysisFrame frame, TraceStreamer streamer,
    ILogger<StructuralPathGrpcService> logger) : StructuralPathService.StructuralPathServiceBase
{
    /// <summary>Informational version of the engine assembly, reported in every trace summary.</summary>
    public static readonly string EngineVersion =
        typeof(PathTracer).Assembly.GetCustomAttribute<AssemblyInformationalVersionAttribute>()?.InformationalVersion
        ?? typeof(PathTracer).Assembly.GetName().Version?.ToString() ?? "unknown";

    /// <summary>
    /// SHA-256 (lower-case hex) of the request as the protobuf runtime serialises it: fields in field-number order,
    /// unknown fields kept. Two requests with the same fingerprint are the same analysis and give the same path.
    /// </summary>
    public static string Fingerprint(IMessage request) => Convert.ToHexStringLower(SHA256.HashData(request.ToByteArray()));

    public override Task TracePath(TracePathRequest request, IServerStreamWriter<TracePathResponse> responseStream, ServerCallContext context) =>
        frame.RunAsync("TracePath", request.Model, context, () =>
        {
            // Before the slot: everything cheap that can refuse the request.
            limits.CheckControls(request.Controls);
            var perfect = AnalysisFrame.BuildModel(request.Model, request.LoadCase);
            var imperfection = request.Imperfection;
            double amplitude = 0;
            if (imperfection is not null)
            {
                ImperfectionMapper.Check(perfect.Definition, imperfection);
                amplitude = ImperfectionMapper.ToLength(perfect.Definition, imperfection, imperfection.Amplitude, "imperfection.amplitude");
            }
            var controls = ControlsMapper.ToControls(request.Controls, limits.DefaultMaxPoints, limits.MaxTraceTime);
            bool exactMemory = frame.MemoryNeedsExactEstimate(perfect, 0);
            string fingerprint = Fingerprint(request);
            // Inside the slot, on the compute thread, with the call's token: the exact memory estimate and the shaping
            // of the imperfection (a buckling analysis of the perfect model when it is given by buckling modes).
            StructuralModel Prepare(CancellationToken ct)
            {
                if (exactMemory) frame.CheckMemory(perfect, 0, ct);
                if (imperfection is null) return perfect;
                // AnalysisInputException (no buckling mode, zero shape) carries its reason and field to the frame.
                return StructuralModel.Create(ImperfectionMapper.Apply(perfect.Definition, imperfection, ct));
            }
            return new PreparedAnalysis(async call =>
            {
                var summary = await streamer.StreamAsync(perfect, controls, responseStream, call, fingerprint, EngineVersion,
                    exactMemory || imperfection is not null ? Prepare : null);
                // Stopped by the call's cancellation, a shutdown or the time bound: the engine may have ended with a
                // Cancelled summary; the caller still gets CANCELLED, UNAVAILABLE or DEADLINE_EXCEEDED rather than OK.
                call.Token.ThrowIfCancellationRequested();
                if (summary is null) return "Cancelled";
                logger.LogInformation(
                    "Trace ended {StopReason} after {Points} points, {Steps} steps, {Iterations} iterations, {Cuts} cuts, {CriticalPoints} critical points; max load factor {MaxLoadFactor}, wall time {WallTimeMs} ms",
                    summary.Reason, summary.Points, summary.Steps, summary.Iterations, summary.Cuts, summary.CriticalPoints.Count,
                    summary.MaxLoadFactor, summary.WallTime.TotalMilliseconds);
                return summary.Reason.ToString();
            }, controls.WallTimeLimit);
        });

    public override Task<CheckModelResponse> CheckModel(CheckModelRequest request, ServerCallContext context)
    {
        // Validation only: cheap, so it takes no analysis slot and is not counted as an analysis.
        limits.CheckModelSize(request.Model);
        var (response, errors, warnings) = ModelCheck.Run(request, limits.DefaultMaxPoints, limits.MaxTraceTime);
        logger.LogInformation("Model check: {Errors} errors, {Warnings} warnings", errors, warnings);
        return Task.FromResult(response);
    }

    public override async Task<AnalyzeLinearResponse> AnalyzeLinear(AnalyzeLinearRequest request, ServerCallContext context)
    {
        AnalyzeLinearResponse? response = null;
        await frame.RunAsync("AnalyzeLinear", request.Model, context, () =>
        {
            double lf = request.HasLoadFactor ? request.LoadFactor : 1.0;
            if (!double.IsFinite(lf)) throw RpcErrors.InvalidField("load_factor", "NON_FINITE_NUMBER", $"load_factor is {lf}; it must be finite");
            var model = AnalysisFrame.BuildModel(request.Model, request.LoadCase);
            bool exactMemory = frame.MemoryNeedsExactEstimate(model, 0);
            return new PreparedAnalysis(async call =>
            {
            // On a compute thread of its own, with the call's token (caller, shutdown, time bound).
            var result = await ComputeThreads.Run(() =>
            {
                if (exactMemory) frame.CheckMemory(model, 0, call.Token);
                return LinearStaticAnalysis.Run(model, lf, cancellationToken: call.Token);
            });
            var mapper = new ResultMapper(model, []);
            response = new AnalyzeLinearResponse
            {
                LoadFactor = result.LoadFactor,
                State = mapper.ToState(result.Displacements, result.BarForces, null, result.Reactions),
                Units = ModelMapper.ToUnits(model.Units),
            };
            response.Warnings.AddRange(model.Warnings.Select(ResultMapper.ToFinding));
            response.SlackBars.AddRange(result.SlackBars);
            FiniteGuard.ThrowIfNonFinite(response);
            return "Solved";
            }, limits.MaxTraceTime);
        });
        return response!;
    }

    public override async Task<FindBucklingModesResponse> FindBucklingModes(FindBucklingModesRequest request, ServerCallContext context)
    {
        FindBucklingModesResponse? response = null;
        await frame.RunAsync("FindBucklingModes", request.Model, context, () =>
        {
            int count = request.HasModeCount ? request.ModeCount : 3;
            if (count < 1 || count > limits.Values.MaxBucklingModes)
                throw RpcErrors.InvalidField("mode_count", "MODE_COUNT_OUT_OF_RANGE", $"mode_count is {count}; it must be 1..{limits.Values.MaxBucklingModes}");
            var model = AnalysisFrame.BuildModel(request.Model, request.LoadCase);
            // The subspace iteration keeps four dense blocks of q = max(2p, p + 8) vectors, plus the two matrices.
            int extraVectors = 4 * Math.Max(2 * count, count + 8);
            bool exactMemory = frame.MemoryNeedsExactEstimate(model, extraVectors);
            return new PreparedAnalysis(async call =>
            {
            LinearBucklingResult result;
            try
            {
                // On a compute thread of its own, with the call's token (caller, shutdown, time bound).
                result = await ComputeThreads.Run(() =>
                {
                    if (exactMemory) frame.CheckMemory(model, extraVectors, call.Token);
                    return LinearBucklingAnalysis.Run(model, count, ct: call.Token);
                });
            }
            catch (ArgumentOutOfRangeException ex) { throw RpcErrors.InvalidField("mode_count", "MODE_COUNT_OUT_OF_RANGE", ex.Message); }
            var mapper = new ResultMapper(model, []);
            response = new FindBucklingModesResponse { Iterations = result.Iterations, Converged = result.Converged, Units = ModelMapper.ToUnits(model.Units) };
            response.Modes.AddRange(result.Modes.Select(mapper.ToMode));
            FiniteGuard.ThrowIfNonFinite(response);
            return result.Converged ? "Converged" : "NotConverged";
            }, limits.MaxTraceTime);
        });
        return response!;
    }

    public override async Task<ImportIfcModelResponse> ImportIfcModel(ImportIfcModelRequest request, ServerCallContext context)
    {
        ImportIfcModelResponse? response = null;
        await frame.RunAsync("ImportIfcModel", null, context, () =>
        {
            // Before the slot: the cheap refusals. The size is bounded by gRPC's receive limit already (the same
            // Limits:MaxRequestBytes); the reader holds the file to it again, so no route can feed it more.
            if (request.IfcFile.IsEmpty) throw RpcErrors.InvalidField("ifc_file", "IFC_FILE_MISSING", "ifc_file is empty; send the IFC file's bytes");
            long maxBytes = limits.Values.MaxRequestBytes > 0 ? limits.Values.MaxRequestBytes : long.MaxValue;
            if (request.IfcFile.Length > maxBytes)
                throw RpcErrors.TooLarge("ifc_file", "ifc_file", $"the IFC file has {request.IfcFile.Length} bytes; this server reads at most {maxBytes}");
            var options = new IfcImportOptions
            {
                MaxBytes = maxBytes,
                AnalysisModel = NullIfEmpty(request.AnalysisModel),
                ReferenceLoadGroup = NullIfEmpty(request.ReferenceLoadGroup),
                ConstantLoadGroup = NullIfEmpty(request.ConstantLoadGroup),
                ForceUnit = NullIfEmpty(request.Units?.Force) ?? "kN",
                LengthUnit = NullIfEmpty(request.Units?.Length) ?? "m",
            };
            return new PreparedAnalysis(async call =>
            {
                IfcImportResult result;
                try
                {
                    // Parsing and mapping run on a compute thread of their own, inside the slot; the reader checks no
                    // token, so the time bound ends the call (DEADLINE_EXCEEDED) while the thread finishes the file.
                    result = await ComputeThreads.Run(() =>
                    {
                        using var stream = new MemoryStream(request.IfcFile.Memory.ToArray(), writable: false);
                        return IfcImport.Read(stream, options);
                    }).WaitAsync(call.Token);
                }
                catch (StepFormatException ex) { throw IfcImportErrors.FromFormat(ex); }
                catch (ArgumentException ex) { throw IfcImportErrors.FromOption(ex, request); }
                // The model read must fit the same limits as a model sent directly.
                limits.CheckModelSize(result.Model);
                response = new ImportIfcModelResponse
                {
                    Model = result.Model,
                    LoadCase = result.LoadCase,
                    UnitsNote = result.UnitsNote,
                    Schema = result.Schema,
                };
                response.Findings.AddRange(result.Findings);
                FiniteGuard.ThrowIfNonFinite(response);
                logger.LogInformation("IFC import ({Schema}): {Nodes} nodes, {Bars} bars, {Findings} findings",
                    result.Schema, result.Model.Nodes.Count, result.Model.Bars.Count, result.Findings.Count);
                return result.Findings.Any(f => f.Severity == Contracts.V1.FindingSeverity.Error) ? "Incomplete" : "Imported";
            }, limits.MaxTraceTime);
        });
        return response!;
    }

    private static string? NullIfEmpty(string? s) => string.IsNullOrEmpty(s) ? null : s;

}
