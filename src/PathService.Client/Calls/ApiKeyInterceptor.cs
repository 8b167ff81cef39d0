using Grpc.Core;
using Grpc.Core.Interceptors;

namespace PathService.Client.Calls;

/// <summary>Adds the API key header to every call. An interceptor rather than call credentials, so that it also works
/// on a cleartext loopback channel (call credentials are refused there by design).</summary>
internal sealed class ApiKeyHeaderInterceptor(string header, string key) : Interceptor
{
    private ClientInterceptorContext<TRequest, TResponse> With<TRequest, TResponse>(ClientInterceptorContext<TRequest, TResponse> context)
        where TRequest : class where TResponse : class
    {
        var headers = context.Options.Headers ?? new Metadata();
        if (headers.Get(header) is null) headers.Add(header, key);
        return new ClientInterceptorContext<TRequest, TResponse>(context.Method, context.Host, context.Options.WithHeaders(headers));
    }

    public override AsyncUnaryCall<TResponse> AsyncUnaryCall<TRequest, TResponse>(TRequest request, ClientInterceptorContext<TRequest, TResponse> context,
        AsyncUnaryCallContinuation<TRequest, TResponse> continuation) => continuation(request, With(context));

    public override AsyncServerStreamingCall<TResponse> AsyncServerStreamingCall<TRequest, TResponse>(TRequest request,
        ClientInterceptorContext<TRequest, TResponse> context, AsyncServerStreamingCallContinuation<TRequest, TResponse> continuation) =>
        continuation(request, With(context));

    public override TResponse BlockingUnaryCall<TRequest, TResponse>(TRequest request, ClientInterceptorContext<TRequest, TResponse> context,
        BlockingUnaryCallContinuation<TRequest, TResponse> continuation) => continuation(request, With(context));
}
