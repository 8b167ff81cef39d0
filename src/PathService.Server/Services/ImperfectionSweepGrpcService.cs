using System.Threading.Channels;
using Grpc.Core;
using PathService.Application;
using PathService.Contracts.V1;
using PathService.Server.Limits;

namespace PathService.Server.Services;

/// <summary>
/// Imperfection sensitivity in one call, a thin adapter of the application layer: the perfect structure's first
/// critical point, then one result per amplitude, streamed as each trace finishes. One analysis slot and one time limit
/// (<c>Limits:MaxSweepSeconds</c>) for the whole sweep, under the same limits as every analysis.
/// </summary>
public sealed class ImperfectionSweepGrpcService(AnalysisApplication analyses, AnalysisFrame frame, ILogger<ImperfectionSweepGrpcService> logger)
    : ImperfectionSweepService.ImperfectionSweepServiceBase
{
    public override Task SweepImperfections(SweepImperfectionsRequest request, IServerStreamWriter<SweepImperfectionsResponse> responseStream, ServerCallContext context) =>
        frame.RunAsync("SweepImperfections", request.Model, context, () =>
        {
            var sweep = analyses.PrepareSweep(request);
            return new PreparedAnalysis(async call =>
            {
                // The sweep is CPU work: a compute thread of its own runs it and each result is written as it arrives.
                using var stop = CancellationTokenSource.CreateLinkedTokenSource(call.Token);
                var channel = Channel.CreateBounded<SweepImperfectionsResponse>(4);
                var worker = ComputeThreads.Run(() =>
                {
                    try
                    {
                        foreach (var message in sweep.Run(call.Remaining, stop.Token))
                            while (!channel.Writer.TryWrite(message))
                                if (!channel.Writer.WaitToWriteAsync(stop.Token).AsTask().GetAwaiter().GetResult()) return;
                        channel.Writer.TryComplete();
                    }
                    catch (Exception ex) { channel.Writer.TryComplete(ex); }
                });
                try
                {
                    await foreach (var message in channel.Reader.ReadAllAsync(call.Token))
                        await call.WriteAsync(responseStream, message);
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
                logger.LogInformation("Imperfection sweep of {Amplitudes} amplitudes completed", sweep.Amplitudes);
                return "Swept";
            }, sweep.TimeLimit);
        });
}
