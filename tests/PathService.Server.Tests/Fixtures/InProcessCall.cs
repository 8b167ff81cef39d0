using Grpc.Core;

namespace PathService.Server.Tests.Fixtures;

/// <summary>A minimal call context for invoking the service class directly, without Kestrel.</summary>
public sealed class InProcessCallContext(string method, CancellationToken cancellationToken = default, Metadata? headers = null) : ServerCallContext
{
    protected override string MethodCore => method;
    protected override string HostCore => "in-process";
    protected override string PeerCore => "in-process";
    protected override DateTime DeadlineCore => DateTime.MaxValue;
    protected override Metadata RequestHeadersCore { get; } = headers ?? [];
    protected override CancellationToken CancellationTokenCore => cancellationToken;
    protected override Metadata ResponseTrailersCore { get; } = [];
    protected override Status StatusCore { get; set; }
    protected override WriteOptions? WriteOptionsCore { get; set; }
    protected override AuthContext AuthContextCore { get; } = new(null, new Dictionary<string, List<AuthProperty>>());
    protected override ContextPropagationToken CreatePropagationTokenCore(ContextPropagationOptions? options) => throw new NotSupportedException();
    protected override Task WriteResponseHeadersAsyncCore(Metadata responseHeaders) => Task.CompletedTask;
}

/// <summary>Collects the messages a server-streaming method writes.</summary>
public sealed class CollectingStreamWriter<T> : IServerStreamWriter<T>
{
    public List<T> Messages { get; } = [];
    public WriteOptions? WriteOptions { get; set; }

    public Task WriteAsync(T message, CancellationToken cancellationToken) => WriteAsync(message);

    public Task WriteAsync(T message)
    {
        lock (Messages) Messages.Add(message);
        return Task.CompletedTask;
    }
}
