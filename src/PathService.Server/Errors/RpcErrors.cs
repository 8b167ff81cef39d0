using Google.Protobuf.WellKnownTypes;
using Google.Rpc;
using Grpc.Core;
using PathService.Application.Errors;

namespace PathService.Server.Errors;

/// <summary>
/// Builds the RpcExceptions of the service with the richer error model: a google.rpc.Status whose details say
/// exactly what to fix (BadRequest field violations, ErrorInfo, QuotaFailure, RetryInfo). Bad input never surfaces
/// as UNKNOWN or INTERNAL.
/// </summary>
public static class RpcErrors
{
    public const string Domain = "pathservice.v1";

    /// <summary>Field violations listed in one error; CheckModel returns every finding instead.</summary>
    public const int MaxViolations = 50;

    /// <summary>
    /// The status of a refusal of the application layer: INVALID_ARGUMENT with one field violation per fault (Invalid);
    /// FAILED_PRECONDITION with ErrorInfo (reason, and the field or the mechanism's node and direction) and the faults as
    /// field violations (Unsuitable); RESOURCE_EXHAUSTED with QuotaFailure naming the limit and the field (OverLimit);
    /// DEADLINE_EXCEEDED (OutOfTime).
    /// </summary>
    public static RpcException From(AnalysisRefusedException r) => r.Kind switch
    {
        RefusalKind.Invalid => Build(StatusCode.InvalidArgument, r.Message, Violations(r.Faults)),
        RefusalKind.Unsuitable => r.Faults.Count == 0
            ? Build(StatusCode.FailedPrecondition, r.Message, Info(r))
            : Build(StatusCode.FailedPrecondition, r.Message, Info(r), Violations(r.Faults)),
        RefusalKind.OverLimit => Build(StatusCode.ResourceExhausted, r.Message,
            new QuotaFailure { Violations = { new QuotaFailure.Types.Violation { Subject = r.Subject ?? r.Field, Description = r.Message } } },
            new BadRequest { FieldViolations = { new BadRequest.Types.FieldViolation { Field = r.Field, Description = r.Message } } }),
        _ => new RpcException(new Grpc.Core.Status(StatusCode.DeadlineExceeded, r.Message)),
    };

    /// <summary>ErrorInfo of an Unsuitable refusal: its reason, its field, and its details (a mechanism's node and direction).</summary>
    private static ErrorInfo Info(AnalysisRefusedException r)
    {
        var info = new ErrorInfo { Reason = r.Reason, Domain = Domain };
        if (r.Field.Length > 0) info.Metadata["field"] = Cut(r.Field, 200);
        foreach (var (key, value) in r.Details) info.Metadata[key] = LogText.Cut(value);
        return info;
    }

    /// <summary>
    /// One field violation per fault. The details travel in a trailer; HTTP/2 clients refuse header blocks beyond 64 KiB
    /// (and a model with thousands of duplicated entries has thousands of findings), so only the first ones are listed;
    /// the message gives the count. Each entry is cut to a few hundred characters and the list stops at about 16 KiB, so
    /// that even a model with huge ids cannot push the trailer past the limit.
    /// </summary>
    private static BadRequest Violations(IReadOnlyList<FieldFault> faults)
    {
        var bad = new BadRequest();
        int budget = 16 * 1024;
        foreach (var f in faults.Take(MaxViolations))
        {
            var v = new BadRequest.Types.FieldViolation
            {
                Field = Cut(f.Field, 200), Description = Cut(LogText.CutQuoted(f.Message), 400), Reason = f.Reason,
            };
            budget -= v.Field.Length + v.Description.Length + v.Reason.Length + 12;
            if (budget < 0) break;
            bad.FieldViolations.Add(v);
        }
        return bad;
    }

    /// <summary>RESOURCE_EXHAUSTED when every analysis slot is taken, with the delay after which a retry is sensible.</summary>
    public static RpcException Busy(int capacity, TimeSpan retryAfter, int queue = 0) =>
        Build(StatusCode.ResourceExhausted, queue > 0 ? $"all {capacity} analysis slots are busy and {queue} callers are waiting already; retry later" : $"all {capacity} analysis slots are busy; retry later",
            new RetryInfo { RetryDelay = Duration.FromTimeSpan(retryAfter) },
            new QuotaFailure { Violations = { new QuotaFailure.Types.Violation { Subject = "concurrent_analyses", Description = $"at most {capacity} analyses run at once" } } });

    /// <summary>RESOURCE_EXHAUSTED when a caller waited the whole queue timeout without getting a slot.</summary>
    public static RpcException QueueTimeout(int capacity, TimeSpan waited, TimeSpan retryAfter) =>
        Build(StatusCode.ResourceExhausted, $"no analysis slot (of {capacity}) became free within {waited.TotalSeconds:0.###} s; retry later",
            new RetryInfo { RetryDelay = Duration.FromTimeSpan(retryAfter) },
            new QuotaFailure { Violations = { new QuotaFailure.Types.Violation { Subject = "analysis_queue", Description = $"a caller waits at most {waited.TotalSeconds:0.###} s for one of {capacity} slots" } } });

    /// <summary>RESOURCE_EXHAUSTED when one caller already runs as many analyses as its key allows.</summary>
    public static RpcException CallerBusy(string caller, int max, TimeSpan retryAfter) =>
        Build(StatusCode.ResourceExhausted, $"caller '{caller}' already runs {max} analyses, its limit; retry when one has finished",
            new RetryInfo { RetryDelay = Duration.FromTimeSpan(retryAfter) },
            new QuotaFailure { Violations = { new QuotaFailure.Types.Violation { Subject = $"caller:{caller}", Description = $"at most {max} analyses at once per caller" } } });

    private static string Cut(string s, int max) => s.Length <= max ? s : s[..max] + "…";

    private static RpcException Build(StatusCode code, string message, params Google.Protobuf.IMessage[] details)
    {
        // Caller strings quoted in the message (ids, names) are cut, then the message itself.
        message = LogText.CutQuoted(message);
        if (message.Length > 1000) message = message[..1000] + "…";
        var status = new Google.Rpc.Status { Code = (int)code, Message = message };
        foreach (var d in details) status.Details.Add(Any.Pack(d));
        return status.ToRpcException();
    }
}
