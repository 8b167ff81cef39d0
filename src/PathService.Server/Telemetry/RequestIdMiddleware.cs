using System.Diagnostics;
using Serilog.Context;

namespace PathService.Server.Telemetry;

/// <summary>
/// Gives every call an id: the caller's <c>x-request-id</c> when it sends a sensible one, a new one otherwise. The id is
/// returned as the response header <c>x-request-id</c> (for gRPC: in the response headers, before any message), tagged
/// on the request's span and pushed into the Serilog log context so that every log line of the call carries it.
/// </summary>
public sealed class RequestIdMiddleware(RequestDelegate next, ILogger<RequestIdMiddleware> logger)
{
    public const string Header = "x-request-id";

    public async Task InvokeAsync(HttpContext context)
    {
        string id = context.Request.Headers[Header].ToString();
        if (id.Length is 0 or > 64 || !id.All(c => char.IsAsciiLetterOrDigit(c) || c is '-' or '_' or '.'))
            id = Guid.NewGuid().ToString("N");
        context.TraceIdentifier = id;
        context.Response.Headers[Header] = id;
        Activity.Current?.SetTag("pathservice.request_id", id);
        // Both: the log context covers Serilog's own events (request logging), the scope covers ILogger events and
        // replaces the host's connection-based RequestId of its outer scope.
        using (LogContext.PushProperty("RequestId", id))
        using (logger.BeginScope(new Dictionary<string, object> { ["RequestId"] = id }))
            await next(context);
    }
}
