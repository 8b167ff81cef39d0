using Grpc.Core;
using Grpc.Core.Interceptors;

namespace PathService.Server.Security;

/// <summary>
/// Authentication of the analysis service (health, metrics and reflection are not intercepted). No key →
/// UNAUTHENTICATED; a key that is not one of the configured keys → PERMISSION_DENIED (the caller did present
/// credentials; the server refuses them). The accepted caller is left in the call's UserState for the per-caller limit.
/// The key itself is never logged.
/// </summary>
public sealed class ApiKeyInterceptor(ApiKeyAuthenticator keys, ILogger<ApiKeyInterceptor> logger) : Interceptor
{
    public const string CallerKey = "pathservice.caller";

    public override Task<TResponse> UnaryServerHandler<TRequest, TResponse>(TRequest request, ServerCallContext context, UnaryServerMethod<TRequest, TResponse> continuation)
    {
        Authenticate(context);
        return continuation(request, context);
    }

    public override Task ServerStreamingServerHandler<TRequest, TResponse>(TRequest request, IServerStreamWriter<TResponse> responseStream, ServerCallContext context, ServerStreamingServerMethod<TRequest, TResponse> continuation)
    {
        Authenticate(context);
        return continuation(request, responseStream, context);
    }

    private void Authenticate(ServerCallContext context)
    {
        if (!keys.Enabled)
        {
            context.UserState[CallerKey] = Caller.Anonymous;
            return;
        }
        string? presented = context.RequestHeaders.GetValue(keys.Header);
        switch (keys.Check(presented, out var caller))
        {
            case KeyCheck.Accepted:
                context.UserState[CallerKey] = caller!;
                return;
            case KeyCheck.Missing:
                logger.LogInformation("Refused {Method}: no API key", context.Method);
                throw new RpcException(new Status(StatusCode.Unauthenticated, $"this server requires an API key in the '{keys.Header}' header"));
            default:
                logger.LogWarning("Refused {Method}: unknown API key from {Peer}", context.Method, context.Peer);
                throw new RpcException(new Status(StatusCode.PermissionDenied, "the API key is not valid for this server"));
        }
    }

    public static Caller CallerOf(ServerCallContext context) =>
        context.UserState.TryGetValue(CallerKey, out var c) && c is Caller caller ? caller : Caller.Anonymous;
}
