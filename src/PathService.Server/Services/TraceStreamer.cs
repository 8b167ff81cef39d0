using System.Diagnostics;
using System.Runtime.ExceptionServices;
using System.Threading.Channels;
using Grpc.Core;
using PathService.Application.Analyses;
using PathService.Contracts.V1;
using PathService.Server.Limits;
using PathService.Server.Telemetry;

namespace PathService.Server.Services;

/// <summary>
/// Runs the application layer's lazy, CPU-bound trace on a compute thread of its own (<see cref="ComputeThreads"/>) and
/// streams each message to the caller as soon as it exists. A small bounded channel sits in between: it decouples the
/// solver from the network without letting a slow client make the server buffer a whole path (the worker waits for the
/// client). Writes go through <see cref="AnalysisCall.WriteAsync{T}"/>, so a client that stops reading cannot hold the
/// analysis slot beyond the call's time bound.
/// </summary>
public sealed class TraceStreamer(PathServiceTelemetry telemetry)
{
    private const int ChannelCapacity = 32;

    /// <summary>Streams the trace; returns its summary message (null when the call was cancelled before it).</summary>
    /// <param name="trace">The trace as the application layer prepared it.</param>
    /// <param name="stream">The caller's response stream.</param>
    /// <param name="call">The call's token, time bound and bounded writes.</param>
    /// <exception cref="PathService.Application.Errors.AnalysisRefusedException">An input fault (before anything is streamed, or a non-finite result).</exception>
    public async Task<PathSummary?> StreamAsync(TraceAnalysis trace, IServerStreamWriter<TracePathResponse> stream, AnalysisCall call)
    {
        // The worker obeys a token of its own, linked to the call's, so that the reader can stop it too (e.g. when a
        // write to the client fails without the call being cancelled).
        using var stop = CancellationTokenSource.CreateLinkedTokenSource(call.Token);
        var channel = Channel.CreateBounded<TracePathResponse>(new BoundedChannelOptions(ChannelCapacity)
        {
            SingleReader = true, SingleWriter = true, FullMode = BoundedChannelFullMode.Wait,
        });
        var activity = Activity.Current;
        // The layer's time limit counts from the first pull: what is left of the call's bound then.
        var producer = ComputeThreads.Run(() => Produce(trace.Run(call.Remaining, stop.Token), channel.Writer, activity, stop.Token));
        try
        {
            await foreach (var message in channel.Reader.ReadAllAsync(call.Token))
                await call.WriteAsync(stream, message);
        }
        catch (Exception ex)
        {
            await stop.CancelAsync();
            // A failure of the analysis reaches us through the channel; rethrow its own exception.
            var inner = ex is ChannelClosedException { InnerException: { } i } ? i : ex;
            ExceptionDispatchInfo.Throw(inner);
        }
        finally
        {
            // The engine sees the same token and stops within one iteration; waiting here guarantees the compute
            // thread is free before the analysis slot is handed back.
            await producer.ConfigureAwait(false);
        }
        return producer.Result;
    }

    /// <summary>Pulls the trace's messages on the compute thread and hands them to the channel, waiting while it is full.</summary>
    private PathSummary? Produce(IEnumerable<TracePathResponse> messages, ChannelWriter<TracePathResponse> writer, Activity? activity, CancellationToken ct)
    {
        PathSummary? summary = null;
        try
        {
            foreach (var message in messages)
            {
                telemetry.Record(message, activity);
                if (message.Summary is { } s) summary = s;
                // This is a dedicated thread, not a pool thread: blocking it while the client catches up costs nobody else.
                while (!writer.TryWrite(message))
                    if (!writer.WaitToWriteAsync(ct).AsTask().GetAwaiter().GetResult()) return summary;
            }
            writer.TryComplete();
        }
        catch (OperationCanceledException) { writer.TryComplete(); }
        catch (ChannelClosedException) { }
        catch (Exception ex) { writer.TryComplete(ex); }
        return summary;
    }
}
