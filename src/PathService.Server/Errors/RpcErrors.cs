using Google.Protobuf.WellKnownTypes;
using Google.Rpc;
using Grpc.Core;
using PathService.Engine;
using PathService.Engine.Model;
using PathService.Contracts.Mapping;

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

    /// <summary>INVALID_ARGUMENT with one field violation per error finding (warnings are left out).</summary>
    public static RpcException Invalid(IEnumerable<ValidationFinding> findings)
    {
        var errors = findings.Where(f => f.Severity == FindingSeverity.Error).ToList();
        var bad = new BadRequest();
        // The details travel in a trailer; HTTP/2 clients refuse header blocks beyond 64 KiB (and a model with thousands
        // of duplicated entries has thousands of findings), so only the first ones are listed; the message gives the count.
        // Each entry is cut to a few hundred characters and the list stops at about 16 KiB, so that even a model with
        // huge ids cannot push the trailer past the limit.
        int budget = 16 * 1024;
        foreach (var f in errors.Take(MaxViolations))
        {
            var v = new BadRequest.Types.FieldViolation
            {
                Field = Cut(FieldPaths.ToRequestPath(f.FieldPath), 200), Description = Cut(LogText.CutQuoted(Describe(f)), 400),
                Reason = FieldPaths.CodeName(f.Code), // the finding's code, the same string CheckModel reports as Finding.code
            };
            budget -= v.Field.Length + v.Description.Length + v.Reason.Length + 12;
            if (budget < 0) break;
            bad.FieldViolations.Add(v);
        }
        string first = errors.Count > 0 ? Describe(errors[0]) : "the request is invalid";
        string message = errors.Count > 1 ? $"{first} (and {errors.Count - 1} more)" : first;
        return Build(StatusCode.InvalidArgument, message, bad);
    }

    /// <summary>
    /// INVALID_ARGUMENT for one request field the engine does not see (e.g. mode_count), with its reason code
    /// (docs/api.md, "Error reasons").
    /// </summary>
    public static RpcException InvalidField(string field, string reason, string description) =>
        Build(StatusCode.InvalidArgument, description, new BadRequest
        {
            FieldViolations = { new BadRequest.Types.FieldViolation { Field = field, Description = description, Reason = reason } },
        });

    /// <summary>FAILED_PRECONDITION for a structure that is a mechanism: the model is well-formed but cannot carry load.</summary>
    public static RpcException Mechanism(MechanismException ex) =>
        Build(StatusCode.FailedPrecondition, ex.Message, new ErrorInfo
        {
            Reason = "MECHANISM",
            Domain = Domain,
            Metadata = { ["node"] = LogText.Cut(ex.NodeId), ["direction"] = ex.Direction.ToString().ToLowerInvariant() },
        });

    /// <summary>
    /// FAILED_PRECONDITION for an input fault the engine found while computing (any <see cref="AnalysisInputException"/>):
    /// ErrorInfo with the engine's reason and the field, and a field violation naming the field.
    /// </summary>
    public static RpcException Input(AnalysisInputException ex) =>
        Build(StatusCode.FailedPrecondition, ex.Message,
            new ErrorInfo { Reason = ex.Reason, Domain = Domain, Metadata = { ["field"] = Cut(ex.Field, 200) } },
            new BadRequest { FieldViolations = { new BadRequest.Types.FieldViolation { Field = Cut(ex.Field, 200), Description = Cut(ex.Message, 400), Reason = ex.Reason } } });

    /// <summary>FAILED_PRECONDITION for a start state that the requested analysis cannot handle (e.g. already unstable).</summary>
    public static RpcException Precondition(string reason, string message) =>
        Build(StatusCode.FailedPrecondition, message, new ErrorInfo { Reason = reason, Domain = Domain });

    /// <summary>RESOURCE_EXHAUSTED for a request above a configured size limit; retrying the same request cannot help.</summary>
    public static RpcException TooLarge(string field, string subject, string description) =>
        Build(StatusCode.ResourceExhausted, description,
            new QuotaFailure { Violations = { new QuotaFailure.Types.Violation { Subject = subject, Description = description } } },
            new BadRequest { FieldViolations = { new BadRequest.Types.FieldViolation { Field = field, Description = description } } });

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

    private static string Describe(ValidationFinding f) =>
        f.ItemId is { Length: > 0 } id && !f.Message.Contains(id, StringComparison.Ordinal) ? $"{f.Message} ('{LogText.Cut(id)}')" : f.Message;

    /// <summary>FAILED_PRECONDITION when the result of a well-formed model is not finite (its numbers overflow double precision).</summary>
    public static RpcException NonFinite(string where) =>
        Build(StatusCode.FailedPrecondition,
            $"the analysis produced a non-finite value ({where}); the model's magnitudes (moduli, areas, loads, coordinates) overflow double precision",
            new ErrorInfo { Reason = "NON_FINITE_RESULT", Domain = Domain, Metadata = { ["field"] = where } });

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
