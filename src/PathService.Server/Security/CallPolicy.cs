using Grpc.Core;
using PathService.Server.Telemetry;

namespace PathService.Server.Security;

/// <summary>What the policy decided for one call.</summary>
public enum CallAdmission
{
    /// <summary>The service is on the anonymous allow-list (health, reflection), or authentication is off.</summary>
    Open,
    /// <summary>A configured key was presented.</summary>
    Accepted,
    /// <summary>No key, on a service that needs one: UNAUTHENTICATED.</summary>
    Missing,
    /// <summary>A key that is not configured: PERMISSION_DENIED.</summary>
    Rejected,
}

/// <summary>
/// Deny by default: with API keys configured, every gRPC method of every service needs a key, except the services on
/// <see cref="AnonymousServices"/> (by full service name). The one place that decides, used by the request guard
/// (before the body is read) and by the global interceptor (gRPC and JSON transcoding), so a service added later is
/// authenticated without being registered anywhere.
/// </summary>
public sealed class CallPolicy(ApiKeyAuthenticator keys, PathServiceTelemetry telemetry, ILogger<CallPolicy> logger)
{
    /// <summary>Services that answer without a key: probes must reach health, and reflection shows the public schema only.</summary>
    public static readonly IReadOnlySet<string> AnonymousServices = new HashSet<string>(StringComparer.Ordinal)
    {
        "grpc.health.v1.Health",
        "grpc.reflection.v1alpha.ServerReflection",
        "grpc.reflection.v1.ServerReflection",
    };

    public string Header => keys.Header;
    public bool Enabled => keys.Enabled;

    /// <summary>Full service name of a gRPC method path (<c>/package.Service/Method</c> or <c>package.Service/Method</c>).</summary>
    public static string ServiceOf(string method)
    {
        var s = method.AsSpan().TrimStart('/');
        int slash = s.IndexOf('/');
        return (slash < 0 ? s : s[..slash]).ToString();
    }

    /// <summary>Decides a call to <paramref name="method"/> that presented <paramref name="presented"/> (null: no key header). Refusals are counted and logged.</summary>
    public CallAdmission Admit(string method, string? presented, out Caller caller)
    {
        caller = Caller.Anonymous;
        if (!keys.Enabled || AnonymousServices.Contains(ServiceOf(method))) return CallAdmission.Open;
        switch (keys.Check(presented, out var known))
        {
            case KeyCheck.Accepted:
                caller = known!;
                return CallAdmission.Accepted;
            case KeyCheck.Missing:
                telemetry.RecordAuthenticationFailure(StatusCode.Unauthenticated);
                logger.LogInformation("Refused {Method}: no API key", LogText.Cut(method));
                return CallAdmission.Missing;
            default:
                telemetry.RecordAuthenticationFailure(StatusCode.PermissionDenied);
                logger.LogWarning("Refused {Method}: unknown API key", LogText.Cut(method));
                return CallAdmission.Rejected;
        }
    }

    /// <summary>The status of a refusal (null when admitted).</summary>
    public Status? RefusalOf(CallAdmission admission) => admission switch
    {
        CallAdmission.Missing => new Status(StatusCode.Unauthenticated, $"this server requires an API key in the '{keys.Header}' header"),
        CallAdmission.Rejected => new Status(StatusCode.PermissionDenied, "the API key is not valid for this server"),
        _ => null,
    };
}
