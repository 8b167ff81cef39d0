using Grpc.Core;
using Grpc.Core.Interceptors;

namespace PathService.Server.Security;

/// <summary>
/// Authentication of every gRPC method, registered globally (so JSON-transcoded calls pass it too) and applied to all
/// four kinds of handler; <see cref="CallPolicy"/> decides. No key → UNAUTHENTICATED; a key that is not one of the
/// configured keys → PERMISSION_DENIED (the caller did present credentials; the server refuses them). The accepted
/// caller is left in the call's UserState for the per-caller limit. The key itself is never logged.
/// </summary>
public sealed class ApiKeyInterceptor(CallPolicy policy) : Interceptor
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

    public override Task<TResponse> ClientStreamingServerHandler<TRequest, TResponse>(IAsyncStreamReader<TRequest> requestStream, ServerCallContext context, ClientStreamingServerMethod<TRequest, TResponse> continuation)
    {
        Authenticate(context);
        return continuation(requestStream, context);
    }

    public override Task DuplexStreamingServerHandler<TRequest, TResponse>(IAsyncStreamReader<TRequest> requestStream, IServerStreamWriter<TResponse> responseStream, ServerCallContext context, DuplexStreamingServerMethod<TRequest, TResponse> continuation)
    {
        Authenticate(context);
        return continuation(requestStream, responseStream, context);
    }

    private void Authenticate(ServerCallContext context)
    {
        var admission = policy.Admit(context.Method, context.RequestHeaders.GetValue(policy.Header), out var caller);
        if (policy.RefusalOf(admission) is { } refusal) throw new RpcException(refusal);
        context.UserState[CallerKey] = caller;
    }

    public static Caller CallerOf(ServerCallContext context) =>
        context.UserState.TryGetValue(CallerKey, out var c) && c is Caller caller ? caller : Caller.Anonymous;
}
