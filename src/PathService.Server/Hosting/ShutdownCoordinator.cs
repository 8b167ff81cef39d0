using System.Diagnostics;
using Microsoft.Extensions.Options;
using PathService.Server.Configuration;
using PathService.Server.Limits;

namespace PathService.Server.Hosting;

/// <summary>
/// Graceful shutdown. When the host begins to stop (before Kestrel stops accepting), health turns NOT_SERVING and new
/// analyses are refused with UNAVAILABLE; running ones get the configured grace period, then they are cancelled and
/// their callers get UNAVAILABLE. Only then does the web server stop.
/// </summary>
public sealed class ShutdownCoordinator(AnalysisGate gate, IOptions<PathServiceOptions> options, ILogger<ShutdownCoordinator> logger)
    : IHostedLifecycleService, IDisposable
{
    private readonly CancellationTokenSource _abort = new();
    private volatile bool _draining;

    /// <summary>True once shutdown has begun.</summary>
    public bool Draining => _draining;

    /// <summary>Cancelled when the grace period is over; every analysis obeys it.</summary>
    public CancellationToken AbortToken => _abort.Token;

    public TimeSpan Grace => TimeSpan.FromSeconds(Math.Max(0, options.Value.Shutdown.GraceSeconds));

    public async Task StoppingAsync(CancellationToken cancellationToken)
    {
        _draining = true;
        var clock = Stopwatch.StartNew();
        logger.LogInformation("Shutdown: health NOT_SERVING, new analyses refused; {Active} running, {Queued} queued, grace {GraceSeconds} s",
            gate.Active, gate.Queued, Grace.TotalSeconds);
        while ((gate.Active > 0 || gate.Queued > 0) && clock.Elapsed < Grace && !cancellationToken.IsCancellationRequested)
            await Task.Delay(25, CancellationToken.None);
        if (gate.Active == 0 && gate.Queued == 0)
        {
            logger.LogInformation("Shutdown: all analyses finished after {Ms} ms", clock.ElapsedMilliseconds);
            return;
        }
        logger.LogWarning("Shutdown: grace period over, cancelling {Active} running analyses", gate.Active);
        await _abort.CancelAsync();
        var until = clock.Elapsed + TimeSpan.FromSeconds(10);
        while ((gate.Active > 0 || gate.Queued > 0) && clock.Elapsed < until) await Task.Delay(10, CancellationToken.None);
        logger.LogInformation("Shutdown: {Active} analyses left after {Ms} ms", gate.Active, clock.ElapsedMilliseconds);
    }

    public Task StartingAsync(CancellationToken cancellationToken) => Task.CompletedTask;
    public Task StartAsync(CancellationToken cancellationToken) => Task.CompletedTask;
    public Task StartedAsync(CancellationToken cancellationToken) => Task.CompletedTask;
    public Task StopAsync(CancellationToken cancellationToken) => Task.CompletedTask;
    public Task StoppedAsync(CancellationToken cancellationToken) => Task.CompletedTask;
    public void Dispose() => _abort.Dispose();
}
