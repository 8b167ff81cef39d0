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
/// streamed as each trace finishes. One analysis slot for the whole sweep, under the same limits as every analysis.
/// </summary>
public sealed class ImperfectionStudyGrpcService(RequestLimits limits, AnalysisFrame frame, ILogger<ImperfectionStudyGrpcService> logger)
    : ImperfectionStudyService.ImperfectionStudyServiceBase
{
    public const int MaxAmplitudes = 50;

    public override Task SweepImperfections(SweepImperfectionsRequest request, IServerStreamWriter<SweepImperfectionsResponse> responseStream, ServerCallContext context) =>
        frame.RunAsync("SweepImperfections", request.Model, context, () =>
        {
            limits.CheckControls(request.Controls);
            if (request.Amplitudes.Count == 0) throw RpcErrors.InvalidField("amplitudes", "give at least one imperfection amplitude");
            if (request.Amplitudes.Count > MaxAmplitudes) throw RpcErrors.TooLarge("amplitudes", "amplitudes", $"{request.Amplitudes.Count} amplitudes; at most {MaxAmplitudes} per sweep");
            if (request.Imperfection is null) throw RpcErrors.InvalidField("imperfection", "give the imperfection shape (buckling_modes or shape)");
            var model = AnalysisFrame.BuildModel(request.Model, request.LoadCase);
            var controls = ControlsMapper.ToControls(request.Controls, limits.DefaultMaxPoints, limits.MaxTraceTime);
            var problems = controls.Validate(model);
            if (problems.Count > 0) throw RpcErrors.Invalid(problems);
            frame.CheckMemory(model, 0);
            var definition = model.Definition;
            IReadOnlyList<double[]> shapes; IReadOnlyList<double> weights;
            try { (shapes, weights) = ImperfectionMapper.Shapes(definition, request.Imperfection); }
            catch (InvalidOperationException ex) { throw RpcErrors.Precondition("UNSTABLE_START", ex.Message); } // no buckling modes to shape it
            var amplitudes = request.Amplitudes.Select((a, i) => ImperfectionMapper.ToLength(definition, request.Imperfection, a, $"amplitudes[{i}]")).ToList();
            return async ct =>
            {
                // The sweep is CPU work: a worker thread runs it and each result is written as it arrives.
                var channel = Channel.CreateBounded<SweepEvent>(4);
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
                    await responseStream.WriteAsync(ResultMapper.ToSweepResponse(e), ct);
                await worker;
                ct.ThrowIfCancellationRequested();
                logger.LogInformation("Imperfection sweep of {Amplitudes} amplitudes completed", amplitudes.Count);
                return "Swept";
            };
        });
}
