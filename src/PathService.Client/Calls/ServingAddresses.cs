using Grpc.Net.Client.Balancer;

namespace PathService.Client.Calls;

/// <summary>
/// The address list the channel's round-robin balancer works from. It starts as every configured address; after an
/// instance failed, <see cref="PathServiceConnection"/> publishes only the instances whose gRPC health reports SERVING,
/// so the balancer's next picks skip draining (NOT_SERVING) and dead instances. The balancing itself stays
/// Grpc.Net.Client's own (RoundRobinConfig); this resolver only decides which addresses it may pick from.
/// </summary>
internal sealed class ServingAddresses(IReadOnlyList<Uri> addresses) : ResolverFactory
{
    /// <summary>The scheme of the channel's target ("serving:///pathservice").</summary>
    public const string Scheme = "serving";

    private readonly object _gate = new();
    private IReadOnlyList<BalancerAddress> _current = addresses.Select(ToBalancer).ToList();
    private readonly List<Action<ResolverResult>> _listeners = [];

    public override string Name => Scheme;

    public override Resolver Create(ResolverOptions options) => new Listening(this);

    /// <summary>Publishes <paramref name="serving"/> (a non-empty subset of the configured addresses) to the balancer.</summary>
    public void Publish(IEnumerable<Uri> serving)
    {
        List<Action<ResolverResult>> listeners;
        lock (_gate)
        {
            _current = serving.Select(ToBalancer).ToList();
            listeners = [.. _listeners];
        }
        foreach (var l in listeners) l(ResolverResult.ForResult(_current));
    }

    private static BalancerAddress ToBalancer(Uri u) => new(u.Host, u.Port);

    private sealed class Listening(ServingAddresses owner) : Resolver
    {
        private Action<ResolverResult>? _listener;

        public override void Start(Action<ResolverResult> listener)
        {
            IReadOnlyList<BalancerAddress> now;
            lock (owner._gate)
            {
                _listener = listener;
                owner._listeners.Add(listener);
                now = owner._current;
            }
            listener(ResolverResult.ForResult(now));
        }

        protected override void Dispose(bool disposing)
        {
            lock (owner._gate) if (_listener is not null) owner._listeners.Remove(_listener);
            base.Dispose(disposing);
        }
    }
}
