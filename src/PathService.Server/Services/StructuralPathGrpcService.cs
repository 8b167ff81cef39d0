using Grpc.Core;
using PathService.Application;
using PathService.Contracts.V1;
using PathService.Server.Limits;

namespace PathService.Server.Services;

/// <summary>
/// The gRPC surface, a thin adapter of the application layer: each RPC lets <see cref="AnalysisApplication"/> prepare
/// the request (limits, mapping, validation) before the slot, and runs it inside the frame's slot on a compute thread
/// with the call's token and what is left of its time bound; the streaming mechanics live in <see cref="TraceStreamer"/>.
/// Refusals become statuses in <see cref="AnalysisFrame"/>.
/// </summary>
public sealed class StructuralPathGrpcService(
    AnalysisApplication analyses, AnalysisFrame frame, TraceStreamer streamer,
    ILogger<StructuralPathGrpcService> logger) : StructuralPathService.StructuralPathServiceBase
{
    public override Task TracePath(TracePathRequest request, IServerStreamWriter<TracePathResponse> responseStream, ServerCallContext context) =>
        frame.RunAsync("TracePath", request.Model, context, () =>
        {
            var trace = analyses.PrepareTrace(request);
            return new PreparedAnalysis(async call =>
            {
                var summary = await streamer.StreamAsync(trace, responseStream, call);
                // Stopped by the call's cancellation, a shutdown or the time bound: the engine may have ended with a
                // Cancelled summary; the caller still gets CANCELLED, UNAVAILABLE or DEADLINE_EXCEEDED rather than OK.
                call.Token.ThrowIfCancellationRequested();
                if (summary is null) return "Cancelled";
                logger.LogInformation(
                    "Trace ended {StopReason} after {Points} points, {Steps} steps, {Iterations} iterations, {Cuts} cuts, {CriticalPoints} critical points; max load factor {MaxLoadFactor}, wall time {WallTimeMs} ms",
                    trace.Outcome, summary.Points, summary.Steps, summary.Iterations, summary.Cuts, summary.CriticalPoints,
                    summary.MaxLoadFactor, summary.WallTime?.ToTimeSpan().TotalMilliseconds ?? 0);
                return trace.Outcome ?? "Cancelled";
            }, trace.TimeLimit);
        });

    public override Task<CheckModelResponse> CheckModel(CheckModelRequest request, ServerCallContext context)
    {
        // Validation only: cheap, so it takes no analysis slot and is not counted as an analysis. A refusal (a model
        // above the size limits) has no frame to translate it.
        CheckModelResponse response;
        try { response = analyses.Check(request); }
        catch (Application.Errors.AnalysisRefusedException r) { throw Errors.RpcErrors.From(r); }
        logger.LogInformation("Model check: {Errors} errors, {Warnings} warnings",
            response.Findings.Count(f => f.Severity == FindingSeverity.Error), response.Findings.Count(f => f.Severity == FindingSeverity.Warning));
        return Task.FromResult(response);
    }

    public override async Task<AnalyzeLinearResponse> AnalyzeLinear(AnalyzeLinearRequest request, ServerCallContext context)
    {
        AnalyzeLinearResponse? response = null;
        await frame.RunAsync("AnalyzeLinear", request.Model, context, () =>
        {
            var linear = analyses.PrepareLinear(request);
            return new PreparedAnalysis(async call =>
            {
                // On a compute thread of its own, with the call's token (caller, shutdown, time bound).
                response = await ComputeThreads.Run(() => linear.Run(call.Remaining, call.Token));
                return "Solved";
            }, linear.TimeLimit);
        });
        return response!;
    }

    public override async Task<FindBucklingModesResponse> FindBucklingModes(FindBucklingModesRequest request, ServerCallContext context)
    {
        FindBucklingModesResponse? response = null;
        await frame.RunAsync("FindBucklingModes", request.Model, context, () =>
        {
            var buckling = analyses.PrepareBuckling(request);
            return new PreparedAnalysis(async call =>
            {
                // On a compute thread of its own, with the call's token (caller, shutdown, time bound).
                response = await ComputeThreads.Run(() => buckling.Run(call.Remaining, call.Token));
                return response.Converged ? "Converged" : "NotConverged";
            }, buckling.TimeLimit);
        });
        return response!;
    }

    public override async Task<ImportIfcModelResponse> ImportIfcModel(ImportIfcModelRequest request, ServerCallContext context)
    {
        ImportIfcModelResponse? response = null;
        await frame.RunAsync("ImportIfcModel", null, context, () =>
        {
            // The size is bounded by gRPC's receive limit already (the same Limits:MaxRequestBytes); the layer holds the
            // file to it again, so no route can feed it more.
            var import = analyses.PrepareImport(request);
            return new PreparedAnalysis(async call =>
            {
                // Parsing and mapping run on a compute thread of their own, inside the slot; the reader checks no
                // token, so the time bound ends the call (DEADLINE_EXCEEDED) while the thread finishes the file.
                response = await ComputeThreads.Run(() => import.Run(call.Token)).WaitAsync(call.Token);
                logger.LogInformation("IFC import ({Schema}): {Nodes} nodes, {Bars} bars, {Findings} findings",
                    response.Schema, response.Model.Nodes.Count, response.Model.Bars.Count, response.Findings.Count);
                return response.Findings.Any(f => f.Severity == FindingSeverity.Error) ? "Incomplete" : "Imported";
            }, import.TimeLimit);
        });
        return response!;
    }
}
