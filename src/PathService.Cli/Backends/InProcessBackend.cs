using System.Runtime.CompilerServices;
using PathService.Application;
using PathService.Application.Errors;
using PathService.Contracts.V1;

namespace PathService.Cli.Backends;

/// <summary>
/// Runs analyses in this process, the one-machine default: a thin adapter of the same application layer the server
/// uses (<see cref="AnalysisApplication"/>, with the server's default limits), so that a request gets the same answer
/// and the same refusal as from a server with the default configuration. What it adds: the engine runs on a pool
/// thread, and a refusal becomes the <see cref="AnalysisRejectedException"/> that decides pathtrace's exit code.
/// </summary>
internal sealed class InProcessBackend(AnalysisLimits? limits = null) : IAnalysisBackend
{
    private readonly AnalysisApplication _analyses = new(limits ?? AnalysisLimits.Default);

    public string Description => "in-process engine";

    public async IAsyncEnumerable<TracePathResponse> TraceAsync(TracePathRequest request, [EnumeratorCancellation] CancellationToken ct)
    {
        var trace = Adapt(() => _analyses.PrepareTrace(request));
        using var messages = trace.Run(null, ct).GetEnumerator();
        while (await Task.Run(() => Adapt(messages.MoveNext), CancellationToken.None))
            yield return messages.Current;
    }

    public async IAsyncEnumerable<SweepImperfectionsResponse> SweepAsync(SweepImperfectionsRequest request, [EnumeratorCancellation] CancellationToken ct)
    {
        var sweep = Adapt(() => _analyses.PrepareSweep(request));
        using var messages = sweep.Run(null, ct).GetEnumerator();
        while (await Task.Run(() => Adapt(messages.MoveNext), CancellationToken.None))
            yield return messages.Current;
    }

    public Task<CheckModelResponse> CheckAsync(CheckModelRequest request, CancellationToken ct) =>
        Task.FromResult(Adapt(() => _analyses.Check(request)));

    public Task<AnalyzeLinearResponse> LinearAsync(AnalyzeLinearRequest request, CancellationToken ct)
    {
        var linear = Adapt(() => _analyses.PrepareLinear(request));
        return Task.Run(() => Adapt(() => linear.Run(null, ct)), CancellationToken.None);
    }

    public Task<FindBucklingModesResponse> BucklingAsync(FindBucklingModesRequest request, CancellationToken ct)
    {
        var buckling = Adapt(() => _analyses.PrepareBuckling(request));
        return Task.Run(() => Adapt(() => buckling.Run(null, ct)), CancellationToken.None);
    }

    public Task<ImportIfcModelResponse> ImportIfcAsync(ImportIfcModelRequest request, CancellationToken ct)
    {
        var import = Adapt(() => _analyses.PrepareImport(request));
        return Task.Run(() => Adapt(() => import.Run(ct)), CancellationToken.None);
    }

    public ValueTask DisposeAsync() => ValueTask.CompletedTask;

    private static T Adapt<T>(Func<T> work)
    {
        try { return work(); }
        catch (AnalysisRefusedException r) { throw AnalysisRejectedException.From(r); }
    }
}
