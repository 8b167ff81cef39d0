using System.Diagnostics;
using System.Runtime.ExceptionServices;
using System.Threading.Channels;
using Grpc.Core;
using PathService.Contracts.V1;
using PathService.Engine.Continuation;
using PathService.Engine.Model;
using PathService.Contracts.Mapping;
using PathService.Server.Errors;
using PathService.Server.Telemetry;
using CriticalPoint = PathService.Engine.Continuation.CriticalPoint;
using PathPoint = PathService.Engine.Continuation.PathPoint;
using PathSummary = PathService.Engine.Continuation.PathSummary;
using StepCut = PathService.Engine.Continuation.StepCut;
using StopReason = PathService.Engine.Continuation.StopReason;
using SolverControls = PathService.Engine.Continuation.SolverControls;

namespace PathService.Server.Services;

/// <summary>
/// Runs the engine's lazy, CPU-bound path enumeration on a worker thread and streams each event to the caller as soon
/// as it exists. A small bounded channel sits in between: it decouples the solver from the network without letting a
/// slow client make the server buffer a whole path (the worker simply waits for the client).
/// </summary>
public sealed class TraceStreamer(PathServiceTelemetry telemetry)
{
    private const int ChannelCapacity = 32;

    /// <summary>Streams the trace; returns the engine's summary (null when the call was cancelled before it).</summary>
    /// <exception cref="ModelValidationException">Invalid controls (before anything is streamed).</exception>
    /// <exception cref="MechanismException">Singular start (before anything is streamed).</exception>
    public async Task<PathSummary?> StreamAsync(StructuralModel model, SolverControls controls,
        IServerStreamWriter<TracePathResponse> stream, CancellationToken ct, string fingerprint = "", string engineVersion = "",
        CancellationToken writeToken = default)
    {
        // Writes obey the call's own token only: cancelling a pending write makes grpc-dotnet reset the stream, which
        // would hide the status of a server-side stop (shutdown) from the caller.
        if (!writeToken.CanBeCanceled) writeToken = ct;
        // The worker obeys a token of its own, linked to the call's, so that the reader can stop it too (e.g. when a
        // write to the client fails without the call being cancelled).
        using var stop = CancellationTokenSource.CreateLinkedTokenSource(ct);
        // Trace() checks the controls eagerly, so a bad request fails here, on the caller's thread.
        var events = new PathTracer(model, controls).Trace(stop.Token);
        var mapper = new ResultMapper(model, controls.Monitored);
        var channel = Channel.CreateBounded<TracePathResponse>(new BoundedChannelOptions(ChannelCapacity)
        {
            SingleReader = true, SingleWriter = true, FullMode = BoundedChannelFullMode.Wait,
        });
        var activity = Activity.Current;
        var producer = Task.Run(() => ProduceAsync(events, mapper, channel.Writer, activity, fingerprint, engineVersion, stop.Token), CancellationToken.None);
        try
        {
            await foreach (var message in channel.Reader.ReadAllAsync(ct))
                await stream.WriteAsync(message, writeToken);
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
            // The engine sees the same token and stops within one iteration; waiting here guarantees the worker
            // thread is free before the analysis slot is handed back.
            await producer.ConfigureAwait(false);
        }
        return producer.Result;
    }

    private async Task<PathSummary?> ProduceAsync(IEnumerable<PathEvent> events, ResultMapper mapper,
        ChannelWriter<TracePathResponse> writer, Activity? activity, string fingerprint, string engineVersion, CancellationToken ct)
    {
        PathSummary? summary = null;
        try
        {
            foreach (var e in events)
            {
                Record(e, activity);
                if (e is PathSummary s) summary = s;
                var message = mapper.ToResponse(e);
                // A non-finite number ends the stream with FAILED_PRECONDITION instead of reaching the caller.
                FiniteGuard.ThrowIfNonFinite(message);
                if (message.Summary is { } ps)
                {
                    ps.Fingerprint = fingerprint;
                    ps.EngineVersion = engineVersion;
                }
                if (!writer.TryWrite(message)) await writer.WriteAsync(message, ct).ConfigureAwait(false);
            }
            writer.TryComplete();
        }
        catch (OperationCanceledException) { writer.TryComplete(); }
        catch (ChannelClosedException) { }
        catch (Exception ex) { writer.TryComplete(ex); }
        return summary;
    }

    /// <summary>Metrics and span events, recorded on the worker as the engine produces them.</summary>
    private void Record(PathEvent e, Activity? activity)
    {
        switch (e)
        {
            case PathPoint p:
                if (p.Index > 0)
                {
                    telemetry.Steps.Add(1);
                    telemetry.IterationsPerStep.Record(p.Iterations);
                }
                activity?.AddEvent(new ActivityEvent("point", tags: new ActivityTagsCollection
                {
                    ["index"] = p.Index, ["load_factor"] = p.LoadFactor, ["iterations"] = p.Iterations,
                }));
                break;
            case StepCut c:
                telemetry.StepCuts.Add(1, new KeyValuePair<string, object?>("reason", c.Reason.ToString()));
                activity?.AddEvent(new ActivityEvent("step_cut", tags: new ActivityTagsCollection
                {
                    ["step"] = c.Step, ["attempt"] = c.Attempt, ["reason"] = c.Reason.ToString(),
                }));
                break;
            case CriticalPoint cp:
                telemetry.CriticalPoints.Add(1, new KeyValuePair<string, object?>("kind", cp.Kind.ToString()));
                activity?.AddEvent(new ActivityEvent("critical_point", tags: new ActivityTagsCollection
                {
                    ["kind"] = cp.Kind.ToString(), ["load_factor"] = cp.LoadFactor,
                }));
                break;
            case PathSummary s:
                if (s.Reason == StopReason.Diverged) telemetry.Divergences.Add(1);
                telemetry.FactorizationTime.Record(s.FactorizationTime.TotalSeconds);
                telemetry.SolveRefinements.Add(s.Refinements);
                activity?.SetTag("pathservice.stop_reason", s.Reason.ToString());
                activity?.SetTag("pathservice.points", s.Points);
                break;
        }
    }
}
