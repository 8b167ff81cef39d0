using System.Diagnostics.Tracing;

namespace PathService.Server.Telemetry;

/// <summary>
/// Turns the OpenTelemetry exporters' own diagnostics (their EventSource, e.g. "OpenTelemetry-Exporter-OpenTelemetryProtocol"
/// with FailedToReachCollector, ExportMethodException) into a Warning log line when an export to the collector fails,
/// at most once per <see cref="Interval"/> with the count of failures since the last line: a dead collector is visible
/// in the logs without flooding them. Created at start when an OTLP endpoint is configured.
/// </summary>
public sealed class ExportFailureLog : EventListener
{
    public static readonly TimeSpan Interval = TimeSpan.FromSeconds(60);

    private readonly object _gate = new();
    private ILogger? _logger;
    private DateTime _lastLogged = DateTime.MinValue;
    private int _suppressed;

    public ExportFailureLog(ILogger<ExportFailureLog> logger)
    {
        // OnEventSourceCreated may run from the base constructor, before this line: it only enables sources.
        _logger = logger;
    }

    /// <summary>Failures seen since start (for tests and diagnostics).</summary>
    public int Failures { get; private set; }

    protected override void OnEventSourceCreated(EventSource source)
    {
        if (source.Name.StartsWith("OpenTelemetry-Exporter-", StringComparison.Ordinal))
            EnableEvents(source, EventLevel.Warning);
        base.OnEventSourceCreated(source);
    }

    protected override void OnEventWritten(EventWrittenEventArgs e)
    {
        if (_logger is null || e.Level > EventLevel.Warning || !e.EventSource.Name.StartsWith("OpenTelemetry-Exporter-", StringComparison.Ordinal)) return;
        int count;
        lock (_gate)
        {
            Failures++;
            var now = DateTime.UtcNow;
            if (now - _lastLogged < Interval)
            {
                _suppressed++;
                return;
            }
            count = _suppressed + 1;
            _suppressed = 0;
            _lastLogged = now;
        }
        string detail = e.Payload is { Count: > 0 } p ? string.Join("; ", p.Select(x => LogText.Cut(x?.ToString(), 200))) : "";
        _logger.LogWarning("Telemetry export to the collector failed: {ExportEvent} ({ExportDetail}); {Failures} failures since the last such line",
            e.EventName, detail, count);
    }

    public override void Dispose()
    {
        _logger = null;
        base.Dispose();
    }
}
