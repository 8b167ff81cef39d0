using System.Runtime.CompilerServices;
using Google.Rpc;
using Grpc.Core;
using PathService.Application.Errors;
using PathService.Client.Calls;
using PathService.Contracts.V1;

namespace PathService.Cli.Backends;

/// <summary>
/// Runs analyses on PathService over gRPC through the client library's <see cref="PathServiceConnection"/>: one channel
/// balanced round-robin over the addresses, the API key, a private CA, unary calls retried on UNAVAILABLE by the
/// channel's retry policy, and traces restarted on an instance whose health reports SERVING, with every replayed message
/// checked against the one already received (<see cref="ReplayMismatchException"/> when they differ). What this adapter
/// adds is the command line's side: retry notices on standard error, and failures translated into the exceptions that
/// decide pathtrace's exit codes.
/// </summary>
internal sealed class GrpcBackend : IAnalysisBackend
{
    private readonly PathServiceConnection _connection;

    public string Description => _connection.Description;

    /// <param name="addresses">Comma-separated server URLs (http:// or https://).</param>
    /// <param name="connection">API key and custom CA; null = neither.</param>
    public GrpcBackend(string addresses, ConnectionSettings? connection = null, int retries = 3)
    {
        connection ??= new ConnectionSettings();
        // Read the CA here first, so that a missing or unreadable file is an input error (exit 2) with the file's name.
        if (connection.CaFile is { } ca) TlsTrust.LoadCa(ca).Dispose();
        _connection = new PathServiceConnection(new ConnectionOptions
        {
            Addresses = ConnectionOptions.ParseAddresses(addresses),
            ApiKey = connection.ApiKey,
            ApiKeyHeader = connection.ApiKeyHeader,
            CertificateAuthorityFile = connection.CaFile,
            Retries = retries,
            Notice = message => Console.Error.WriteLine(message),
        });
    }

    public async IAsyncEnumerable<TracePathResponse> TraceAsync(TracePathRequest request, [EnumeratorCancellation] CancellationToken ct)
    {
        await using var e = _connection.TraceAsync(request, ct).GetAsyncEnumerator(ct);
        while (true)
        {
            try { if (!await e.MoveNextAsync()) yield break; }
            catch (RpcException ex) { throw Translate(ex); }
            yield return e.Current;
        }
    }

    public async IAsyncEnumerable<SweepImperfectionsResponse> SweepAsync(SweepImperfectionsRequest request, [EnumeratorCancellation] CancellationToken ct)
    {
        await using var e = _connection.SweepAsync(request, ct).GetAsyncEnumerator(ct);
        while (true)
        {
            try { if (!await e.MoveNextAsync()) yield break; }
            catch (RpcException ex) { throw Translate(ex); }
            yield return e.Current;
        }
    }

    public Task<CheckModelResponse> CheckAsync(CheckModelRequest request, CancellationToken ct) => Unary(() => _connection.CheckAsync(request, ct));

    public Task<AnalyzeLinearResponse> LinearAsync(AnalyzeLinearRequest request, CancellationToken ct) => Unary(() => _connection.LinearAsync(request, ct));

    public Task<FindBucklingModesResponse> BucklingAsync(FindBucklingModesRequest request, CancellationToken ct) => Unary(() => _connection.BucklingAsync(request, ct));

    public Task<ImportIfcModelResponse> ImportIfcAsync(ImportIfcModelRequest request, CancellationToken ct) => Unary(() => _connection.ImportIfcAsync(request, ct));

    private static async Task<T> Unary<T>(Func<Task<T>> call)
    {
        try { return await call(); }
        catch (RpcException ex) { throw Translate(ex); }
    }

    /// <summary>
    /// Maps a status to the CLI's exceptions, reading the richer error details: one finding per field violation
    /// (BadRequest), and one for the ErrorInfo unless a violation already carries its reason (its field from the
    /// "field" metadata, its item from "node"), so that a refusal reads as the in-process backend gives it.
    /// </summary>
    private static Exception Translate(RpcException ex)
    {
        var findings = new List<Finding>();
        var status = ex.GetRpcStatus();
        if (status?.GetDetail<BadRequest>() is { } bad)
            findings.AddRange(bad.FieldViolations.Select(v => new Finding { Severity = FindingSeverity.Error, Code = v.Reason, Field = v.Field, Message = v.Description }));
        if (status?.GetDetail<ErrorInfo>() is { } info && !findings.Any(f => f.Code == info.Reason))
            findings.Add(new Finding
            {
                Severity = FindingSeverity.Error, Code = info.Reason, Message = status.Message,
                Field = info.Metadata.TryGetValue("field", out var field) ? field : "",
                ItemId = info.Metadata.TryGetValue("node", out var n) ? n : "",
            });
        return ex.StatusCode switch
        {
            Grpc.Core.StatusCode.InvalidArgument => new AnalysisRejectedException(ex.Status.Detail, findings, RefusalKind.Invalid),
            Grpc.Core.StatusCode.FailedPrecondition => new AnalysisRejectedException(ex.Status.Detail, findings, RefusalKind.Unsuitable),
            Grpc.Core.StatusCode.ResourceExhausted => new AnalysisRejectedException(ex.Status.Detail, findings, RefusalKind.OverLimit),
            Grpc.Core.StatusCode.Unauthenticated => new AuthenticationFailedException($"the server wants an API key (--api-key or PATHSERVICE_API_KEY): {ex.Status.Detail}"),
            Grpc.Core.StatusCode.PermissionDenied => new AuthenticationFailedException($"the server refused the API key: {ex.Status.Detail}"),
            _ when TlsTrust.IsCertificateFailure(ex) => new BackendUnavailableException(
                $"{ex.StatusCode}: the server's TLS certificate is not trusted (give its CA with --ca-file): {ex.Status.Detail}", ex),
            _ => new BackendUnavailableException($"{ex.StatusCode}: {ex.Status.Detail}", ex),
        };
    }

    public ValueTask DisposeAsync() => _connection.DisposeAsync();
}
