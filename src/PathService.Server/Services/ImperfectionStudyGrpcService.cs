using Grpc.Core;
using PathService.Contracts.Mapping;
using PathService.Contracts.V1;
using PathService.Engine.Model;
using PathService.Engine.Stability;
using PathService.Server.Errors;
using PathService.Server.Limits;
using PathService.Server.Telemetry;
using FindingSeverity = PathService.Engine.Model.FindingSeverity;

namespace PathService.Server.Services;

/// <summary>
/// Imperfection sensitivity in one call: the perfect structure's first critical point, then one result per amplitude,
/// streamed as each trace finishes. Takes one analysis slot for the whole sweep.
/// </summary>
public sealed class ImperfectionStudyGrpcService(
    RequestLimits limits, AnalysisGate gate, PathServiceTelemetry telemetry, ILogger<ImperfectionStudyGrpcService> logger)
    : ImperfectionStudyService.ImperfectionStudyServiceBase
{
    public const int MaxAmplitudes = 50;

    public override async Task SweepImperfections(SweepImperfectionsRequest request, IServerStreamWriter<SweepImperfectionsResponse> responseStream, ServerCallContext context)
    {
        limits.CheckModelSize(request.Model);
        limits.CheckControls(request.Controls);
        if (request.Amplitudes.Count == 0) throw RpcErrors.InvalidField("amplitudes", "give at least one imperfection amplitude");
        if (request.Amplitudes.Count > MaxAmplitudes) throw RpcErrors.TooLarge("amplitudes", "amplitudes", $"{request.Amplitudes.Count} amplitudes; at most {MaxAmplitudes} per sweep");
        if (request.Imperfection is null) throw RpcErrors.InvalidField("imperfection", "give the imperfection shape (buckling_modes or shape)");
        using var lease = gate.TryEnter() ?? throw RpcErrors.Busy(gate.Capacity, TimeSpan.FromSeconds(limits.Values.RetryAfterSeconds));
        var tag = new KeyValuePair<string, object?>("rpc", "SweepImperfections");
        telemetry.AnalysesStarted.Add(1, tag);
        telemetry.AnalysesActive.Add(1);
        try
        {
            var definition = ModelMapper.ToDefinition(request.Model, request.LoadCase);
            var findings = ModelValidator.Validate(definition);
            if (findings.Any(f => f.Severity == FindingSeverity.Error)) throw RpcErrors.Invalid(findings);
            var controls = ControlsMapper.ToControls(request.Controls, limits.DefaultMaxPoints, limits.MaxTraceTime);
            var problems = controls.Validate(StructuralModel.Create(definition));
            if (problems.Count > 0) throw RpcErrors.Invalid(problems);
            var (shapes, weights) = ImperfectionMapper.Shapes(definition, request.Imperfection);
            var amplitudes = request.Amplitudes.Select((a, i) => ImperfectionMapper.ToLength(definition, request.Imperfection, a, $"amplitudes[{i}]")).ToList();
            var ct = context.CancellationToken;
            // The sweep is CPU work: run it on a worker thread and write each result as it arrives.
            var channel = System.Threading.Channels.Channel.CreateBounded<SweepEvent>(4);
            var worker = Task.Run(async () =>
            {
                try
                {
                    foreach (var e in ImperfectionSweep.Run(definition, controls, shapes, weights, amplitudes, ct))
                        await channel.Writer.WriteAsync(e, ct);
                    channel.Writer.Complete();
                }
                catch (Exception ex) { channel.Writer.Complete(ex); }
            }, CancellationToken.None);
            await foreach (var e in channel.Reader.ReadAllAsync(ct))
                await responseStream.WriteAsync(ToResponse(e), ct);
            await worker;
            telemetry.AnalysesCompleted.Add(1, tag, new("outcome", "Swept"));
            logger.LogInformation("Imperfection sweep of {Amplitudes} amplitudes completed", amplitudes.Count);
        }
        catch (Exception ex) when (ex is ModelValidationException or MechanismException or OperationCanceledException or InvalidOperationException)
        {
            telemetry.AnalysesFailed.Add(1, tag, new("reason", ex.GetType().Name));
            throw ex switch
            {
                ModelValidationException v => RpcErrors.Invalid(v.Findings),
                MechanismException m => RpcErrors.Mechanism(m),
                OperationCanceledException => new RpcException(new Status(StatusCode.Cancelled, "the sweep was cancelled")),
                _ => RpcErrors.Precondition("UNSTABLE_START", ex.Message),
            };
        }
        finally { telemetry.AnalysesActive.Add(-1); }
    }

    private static SweepImperfectionsResponse ToResponse(SweepEvent e) => e switch
    {
        Engine.Stability.SweepReference r => new()
        {
            Reference = new Contracts.V1.SweepReference
            {
                CriticalLoadFactor = r.CriticalLoadFactor ?? 0, Kind = Kind(r.Kind), Reason = ResultMapper.ToReason(r.Reason), Message = r.Message,
            }.WithoutUnset(r.CriticalLoadFactor is null),
        },
        Engine.Stability.SweepResult s => new()
        {
            Result = Result(s),
        },
        _ => throw new NotSupportedException(e.GetType().Name),
    };

    private static Contracts.V1.SweepResult Result(Engine.Stability.SweepResult s)
    {
        var m = new Contracts.V1.SweepResult
        {
            Index = s.Index, Amplitude = s.Amplitude, Kind = Kind(s.Kind), Reason = ResultMapper.ToReason(s.Reason), Message = s.Message, Points = s.Points,
        };
        if (s.CriticalLoadFactor is { } l) m.CriticalLoadFactor = l;
        if (s.KnockDown is { } k) m.KnockDown = k;
        return m;
    }

    private static CriticalPointKind Kind(Engine.Continuation.CriticalPointKind? k) => k switch
    {
        Engine.Continuation.CriticalPointKind.LimitPoint => CriticalPointKind.LimitPoint,
        Engine.Continuation.CriticalPointKind.Bifurcation => CriticalPointKind.Bifurcation,
        _ => CriticalPointKind.Unspecified,
    };
}

internal static class SweepReferenceExtensions
{
    /// <summary>Clears the optional load factor when the reference trace found no critical point.</summary>
    public static Contracts.V1.SweepReference WithoutUnset(this Contracts.V1.SweepReference r, bool unset)
    {
        if (unset) r.ClearCriticalLoadFactor();
        return r;
    }
}
