using PathService.Application.Errors;
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
    /// <summary>Reads an IFC file into a model and load case; an unreadable file or a bad option is an AnalysisRejectedException.</summary>
    Task<ImportIfcModelResponse> ImportIfcAsync(ImportIfcModelRequest request, CancellationToken ct);
}

/// <summary>
/// A request the analysis refused (invalid input, a mechanism, a limit, its time limit), with its findings: one per field
/// at fault, each with its reason code and field path. Both backends give the same for the same request.
/// </summary>
internal sealed class AnalysisRejectedException(string message, IReadOnlyList<Finding> findings, RefusalKind kind) : Exception(message)
{
    public IReadOnlyList<Finding> Findings { get; } = findings;
    public RefusalKind Kind { get; } = kind;
    /// <summary>Refused under a limit (exit code 7): retrying the same request unchanged cannot help.</summary>
    public bool ResourceLimit => Kind == RefusalKind.OverLimit;

    /// <summary>The application layer's refusal: one finding per fault, or one for the refusal itself when it names none.</summary>
    public static AnalysisRejectedException From(AnalysisRefusedException r)
    {
        var findings = r.Faults.Count > 0
            ? r.Faults.Select(f => new Finding { Severity = FindingSeverity.Error, Code = f.Reason, Field = f.Field, ItemId = f.ItemId ?? "", Message = f.Message }).ToList()
            : [new Finding { Severity = FindingSeverity.Error, Code = r.Reason, Field = r.Field, ItemId = r.ItemId ?? "", Message = r.Message }];
        return new(r.Message, findings, r.Kind);
    }
}

/// <summary>The server could not be reached or answered with a transport failure.</summary>
internal sealed class BackendUnavailableException(string message, Exception? inner = null) : Exception(message, inner);

/// <summary>The server refused the caller: no API key (UNAUTHENTICATED) or one it does not accept (PERMISSION_DENIED).</summary>
internal sealed class AuthenticationFailedException(string message) : Exception(message);

/// <summary>How to reach a secured server: an API key (sent in <see cref="ApiKeyHeader"/>) and a private CA for TLS.</summary>
internal sealed record ConnectionSettings(string? ApiKey = null, string? CaFile = null, string ApiKeyHeader = "x-api-key")
{
    /// <summary>Environment variable read when --api-key is not given.</summary>
    public const string ApiKeyVariable = "PATHSERVICE_API_KEY";

    public static ConnectionSettings From(System.CommandLine.ParseResult p) => new(
        p.GetValue(CliOptions.ApiKey) ?? (Environment.GetEnvironmentVariable(ApiKeyVariable) is { Length: > 0 } k ? k : null),
        p.GetValue(CliOptions.CaFile));
}
