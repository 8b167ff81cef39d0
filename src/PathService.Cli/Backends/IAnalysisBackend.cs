using PathService.Contracts.V1;

namespace PathService.Cli.Backends;

/// <summary>Where analyses run: in this process, or on a server over gRPC. Both speak the service's messages.</summary>
internal interface IAnalysisBackend : IAsyncDisposable
{
    string Description { get; }
    IAsyncEnumerable<TracePathResponse> TraceAsync(TracePathRequest request, CancellationToken ct);
    Task<CheckModelResponse> CheckAsync(CheckModelRequest request, CancellationToken ct);
    Task<AnalyzeLinearResponse> LinearAsync(AnalyzeLinearRequest request, CancellationToken ct);
    Task<FindBucklingModesResponse> BucklingAsync(FindBucklingModesRequest request, CancellationToken ct);
    IAsyncEnumerable<SweepImperfectionsResponse> SweepAsync(SweepImperfectionsRequest request, CancellationToken ct);
}

/// <summary>A request the analysis refused (invalid input, a mechanism, a limit), with its findings.</summary>
internal sealed class AnalysisRejectedException(string message, IReadOnlyList<Finding> findings, bool resourceLimit = false) : Exception(message)
{
    public IReadOnlyList<Finding> Findings { get; } = findings;
    public bool ResourceLimit { get; } = resourceLimit;
}

/// <summary>The server could not be reached or answered with a transport failure.</summary>
internal sealed class BackendUnavailableException(string message, Exception? inner = null) : Exception(message, inner);
