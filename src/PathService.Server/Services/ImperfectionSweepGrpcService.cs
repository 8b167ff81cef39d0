using System.Threading.Channels;
using Grpc.Core;
using PathService.Contracts.Mapping;
using PathService.Contracts.V1;
using PathService.Engine.Stability;
using PathService.Server.Errors;
using PathService.Server.Limits;

namespace PathService.Server.Services;

/// <summary>
/// Imperfection sensitivity in one call: the perfect structure's first critical point, then one result per amplitude,
/// streamed as each trace finishes. One analysis slot and one time limit (<c>Limits:MaxSweepSeconds</c>) for the whole
/// sweep, under the same limits as every analysis.
/// </summary>
public sealed class ImperfectionSweepGrpcService(RequestLimits limits, AnalysisFrame frame, ILogger<ImperfectionSweepGrpcService> logger)
    : ImperfectionSweepService.ImperfectionSweepServiceBase
{
    public const int MaxAmplitudes = 50;

    public override Task SweepImperfections(SweepImperfectionsRequest request, IServerStreamWriter<SweepImperfectionsResponse> responseStream, ServerCallContext context) =>
        frame.RunAsync("SweepImperfections", request.Model, context, () =>
        {
            limits.CheckControls(request.Controls);
            if (request.Amplitudes.Count == 0) throw RpcErrors.InvalidField("amplitudes", "AMPLITUDES_MISSING", "give at least one imperfection amplitude");
            if (request.Amplitudes.Count > MaxAmplitudes) throw RpcErrors.TooLarge("amplitudes", "amplitudes", $"{request.Amplitudes.Count} amplitudes; at most {MaxAmplitudes} per sweep");
            if (request.Imperfection is null) throw RpcErrors.InvalidField("imperfection", "IMPERFECTION_SHAPE_MISSING", "give the imperfection shape (buckling_modes or shape)");
            var model = AnalysisFrame.BuildModel(request.Model, request.LoadCase);
            var controls = ControlsMapper.ToControls(request.Controls, limits.DefaultMaxPoints, limits.MaxTraceTime);
            var problems = controls.Validate(model);
            if (problems.Count > 0) throw RpcErrors.Invalid(problems);
            frame.CheckMemory(model, 0);
            var definition = model.Definition;
            // Cheap checks before the slot; the buckling analysis that shapes the imperfection runs inside it.
            ImperfectionMapper.Check(definition, request.Imperfection);
            var amplitudes = request.Amplitudes.Select((a, i) => ImperfectionMapper.ToLength(definition, request.Imperfection, a, $"amplitudes[{i}]")).ToList();
            bool exactMemory = frame.MemoryNeedsExactEstimate(model, 0);
            TimeSpan? sweepLimit = limits.Values.MaxSweepSeconds > 0 ? TimeSpan.FromSeconds(limits.Values.MaxSweepSeconds) : null;
            return new PreparedAnalysis(async call =>
            {
                // The sweep is CPU work: a compute thread of its own runs it and each result is written as it arrives.
                using var stop = CancellationTokenSource.CreateLinkedTokenSource(call.Token);
                var channel = Channel.CreateBounded<SweepEvent>(4);
                var worker = ComputeThreads.Run(() =>
                {
                    try
                    {
                        if (exactMemory) frame.CheckMemory(model, 0, stop.Token);
                        IReadOnlyList<double[]> shapes; IReadOnlyList<double> weights;
                        // A buckling step that cannot shape the imperfection raises AnalysisInputException (its own reason
                        // and field), which the frame answers with FAILED_PRECONDITION.
                        (shapes, weights) = ImperfectionMapper.Shapes(definition, request.Imperfection, stop.Token);
                        // One time limit for the whole sweep, counted from the moment the slot was taken (shaping included):
                        // each trace gets what is left of it.
                        var left = call.Remaining is { } r ? (r > TimeSpan.Zero ? r : TimeSpan.FromMilliseconds(1)) : (TimeSpan?)null;
                        foreach (var e in ImperfectionSweep.Run(definition, controls, shapes, weights, amplitudes, stop.Token, left))
                            while (!channel.Writer.TryWrite(e))
                                if (!channel.Writer.WaitToWriteAsync(stop.Token).AsTask().GetAwaiter().GetResult()) return;
                        channel.Writer.TryComplete();
                    }
                    catch (Exception ex) { channel.Writer.TryComplete(ex); }
                });
                try
                {
                    await foreach (var e in channel.Reader.ReadAllAsync(call.Token))
                        await call.WriteAsync(responseStream, ResultMapper.ToSweepResponse(e));
                }
                catch (Exception ex)
                {
                    await stop.CancelAsync();
                    var inner = ex is ChannelClosedException { InnerException: { } i } ? i : ex;
                    System.Runtime.ExceptionServices.ExceptionDispatchInfo.Throw(inner);
                }
                finally
                {
                    // The compute thread is free before the slot is handed back.
                    await worker.ConfigureAwait(false);
                }
                call.Token.ThrowIfCancellationRequested();
                logger.LogInformation("Imperfection sweep of {Amplitudes} amplitudes completed", amplitudes.Count);
                return "Swept";
            }, sweepLimit);
        });
}
