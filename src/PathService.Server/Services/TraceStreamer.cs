using System.Diagnostics;
using System.Runtime.ExceptionServices;
using System.Threading.Channels;
using Grpc.Core;
using PathService.Contracts.V1;
using PathService.Engine.Continuation;
using PathService.Engine.Model;
using PathService.Contracts.Mapping;
using PathService.Server.Errors;
using PathService.Server.Limits;
using PathService.Server.Telemetry;
using CriticalPoint = PathService.Engine.Continuation.CriticalPoint;
using PathPoint = PathService.Engine.Continuation.PathPoint;
using PathSummary = PathService.Engine.Continuation.PathSummary;
using StepCut = PathService.Engine.Continuation.StepCut;
using StopReason = PathService.Engine.Continuation.StopReason;
using SolverControls = PathService.Engine.Continuation.SolverControls;

namespace PathService.Server.Services;

/// <summary>
/// Runs the engine's lazy, CPU-bound path enumeration on a compute thread of its own (<see cref="ComputeThreads"/>) and
/// streams each event to the caller as soon as it exists. A small bounded channel sits in between: it decouples the
/// solver from the network without letting a slow client make the server buffer a whole path (the worker waits for the
/// client). Writes go through <see cref="AnalysisCall.WriteAsync{T}"/>, so a client that stops reading cannot hold the
/// analysis slot beyond the call's time bound.
/// </summary>
public sealed class TraceStreamer(PathServiceTelemetry telemetry)
{
    private const int ChannelCapacity = 32;

    /// <summary>Streams the trace; returns the engine's summary (null when the call was cancelled before it).</summary>
    /// <param name="model">The model as validated (perfect, when an imperfection is shaped by <paramref name="prepare"/>).</param>
    /// <param name="controls">The engine's controls.</param>
    /// <param name="stream">The caller's response stream.</param>
    /// <param name="call">The call's token, time bound and bounded writes.</param>
    /// <param name="fingerprint">The request's fingerprint, set on the summary.</param>
    /// <param name="engineVersion">The engine's version, set on the summary.</param>
    /// <param name="prepare">Heavy preparation of the model (e.g. shaping an imperfection) run on the compute thread before tracing; null = none.</param>
    /// <exception cref="ModelValidationException">Invalid controls (before anything is streamed).</exception>
    /// <exception cref="MechanismException">Singular start (before anything is streamed).</exception>
    public async Task<PathSummary?> StreamAsync(StructuralModel model, SolverControls controls,
        IServerStreamWriter<TracePathResponse> stream, AnalysisCall call, string fingerprint = "", string engineVersion = "",
        Func<CancellationToken, StructuralModel>? prepare = null)
    {
        // The worker obeys a token of its own, linked to the call's, so that the reader can stop it too (e.g. when a
        // write to the client fails without the call being cancelled).
        using var stop = CancellationTokenSource.CreateLinkedTokenSource(call.Token);
        var channel = Channel.CreateBounded<TracePathResponse>(new BoundedChannelOptions(ChannelCapacity)
        {
            SingleReader = true, SingleWriter = true, FullMode = BoundedChannelFullMode.Wait,
        });
        var activity = Activity.Current;
        var producer = ComputeThreads.Run(() =>
        {
            try
            {
                var traced = prepare?.Invoke(stop.Token) ?? model;
                // The wall-time limit counts from the moment the slot was taken: preparation used part of it.
                var traceControls = call.Remaining is { } left && controls.WallTimeLimit is { } own && left < own
                    ? controls with { WallTimeLimit = left > TimeSpan.Zero ? left : TimeSpan.FromMilliseconds(1) } : controls;
                // Trace() checks the controls eagerly, so a bad request fails before the first event.
                var events = new PathTracer(traced, traceControls).Trace(stop.Token);
                return Produce(events, new ResultMapper(traced, controls.Monitored), channel.Writer, activity, fingerprint, engineVersion, stop.Token);
            }
            catch (Exception ex)
            {
                channel.Writer.TryComplete(ex);
                return null;
            }
        });
        try
        {
            await foreach (var message in channel.Reader.ReadAllAsync(call.Token))
                await call.WriteAsync(stream, message);
        }
        catch (Exception ex)
        {
            await stop.CancelAsync();
            // A failure of the engine reaches us through the channel; rethrow the engine's own exception.
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

    /// <summary>Pulls the engine's events on the compute thread and hands them to the channel, waiting while it is full.</summary>
    private PathSummary? Produce(IEnumerable<PathEvent> events, ResultMapper mapper,
        ChannelWriter<TracePathResponse> writer, Activity? activity, string fingerprint, string engineVersion, CancellationToken ct)
    {
        PathSummary? summary = null;
        try
        {
            foreach (var e in events)
            {
                // Once the analysis is being stopped, whatever the engine still yields may have been cut short (a
                // critical point whose location was interrupted): only the summary goes on. A restarted trace must
                // repeat the stream exactly, and clients compare it bit for bit.
                if (ct.IsCancellationRequested && e is not PathSummary) continue;
                telemetry.Record(e, activity);
                if (e is PathSummary s) summary = s;
                var message = mapper.ToResponse(e);
                // A non-finite number ends the stream with FAILED_PRECONDITION instead of reaching the caller.
                FiniteGuard.ThrowIfNonFinite(message);
                if (message.Summary is { } ps)
                {
                    ps.Fingerprint = fingerprint;
                    ps.EngineVersion = engineVersion;
                }
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
