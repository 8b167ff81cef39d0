using System.Globalization;
using System.Text.Json;
using Google.Protobuf;
using Google.Protobuf.Reflection;
using Google.Protobuf.WellKnownTypes;
using Google.Rpc;
using Microsoft.Extensions.Options;
using PathService.Server.Configuration;
using PathService.Server.Security;

namespace PathService.Server.Hosting;

/// <summary>
/// The JSON side of the contract (google.api.http routes, taken from the descriptors): before JSON transcoding sees a
/// request it is authenticated (<see cref="CallPolicy"/>), held to <c>Limits:MaxRequestBytes</c> (HTTP 429 with
/// status RESOURCE_EXHAUSTED in the body: the refusal a gRPC caller gets, under the same HTTP mapping the transcoder
/// uses for every RESOURCE_EXHAUSTED, e.g. a model above the node limit; the QuotaFailure subject request_bytes tells
/// a client that the same body will be refused again) and checked for fields its message type does not have (HTTP 400, INVALID_ARGUMENT, with the
/// field path: the transcoder would ignore them, so a misspelt <c>loadFactr</c> would silently mean λ = 1). Every
/// 429 answered on these routes carries <c>Retry-After</c> (seconds, <c>Limits:RetryAfterSeconds</c> rounded up).
/// </summary>
public sealed class JsonRequestGuard(RequestDelegate next, IOptions<PathServiceOptions> options, CallPolicy policy, ILogger<JsonRequestGuard> logger)
{
    private static readonly JsonFormatter Formatter = new(JsonFormatter.Settings.Default.WithTypeRegistry(
        TypeRegistry.FromMessages(BadRequest.Descriptor, QuotaFailure.Descriptor)));

    private readonly long _maxBytes = options.Value.Limits.MaxRequestBytes > 0 ? options.Value.Limits.MaxRequestBytes : long.MaxValue;
    private readonly string _retryAfter = Math.Max(1, Math.Ceiling(options.Value.Limits.RetryAfterSeconds)).ToString(CultureInfo.InvariantCulture);

    public async Task InvokeAsync(HttpContext context)
    {
        var request = context.Request;
        if (!HttpMethods.IsPost(request.Method) || request.ContentType?.StartsWith("application/grpc", StringComparison.OrdinalIgnoreCase) == true
            || !ContractCatalog.JsonPostRoutes.TryGetValue(request.Path.Value ?? "", out var method))
        {
            await next(context);
            return;
        }
        context.Response.OnStarting(() =>
        {
            if (context.Response.StatusCode == StatusCodes.Status429TooManyRequests && !context.Response.Headers.ContainsKey("Retry-After"))
                context.Response.Headers.RetryAfter = _retryAfter;
            return Task.CompletedTask;
        });

        var admission = policy.Admit(ContractCatalog.PathOf(method), request.Headers[policy.Header].FirstOrDefault(), out _);
        if (policy.RefusalOf(admission) is { } refusal)
        {
            await WriteAsync(context, refusal.StatusCode == Grpc.Core.StatusCode.Unauthenticated ? 401 : 403, (int)refusal.StatusCode, refusal.Detail);
            return;
        }

        string tooLarge = $"the request body is larger than {_maxBytes} bytes, the limit of this server";
        if (request.ContentLength > _maxBytes)
        {
            await RefuseTooLargeAsync(context, method, tooLarge);
            return;
        }
        byte[] body;
        try
        {
            using var buffer = new MemoryStream();
            var chunk = new byte[16 * 1024];
            int read;
            while ((read = await request.Body.ReadAsync(chunk, context.RequestAborted)) > 0)
            {
                buffer.Write(chunk, 0, read);
                if (buffer.Length > _maxBytes)
                {
                    await RefuseTooLargeAsync(context, method, tooLarge);
                    return;
                }
            }
            body = buffer.ToArray();
        }
        catch (Exception ex) when (context.RequestAborted.IsCancellationRequested || ex is IOException or OperationCanceledException or BadHttpRequestException)
        {
            // The client went away (or broke the framing) during the upload: not a server fault, and nobody to answer.
            logger.LogInformation("{Method}: the client aborted the request while sending it ({ExceptionType})", method.Name, ex.GetType().Name);
            context.Abort();
            return;
        }

        if (UnknownField(body, method.InputType) is { } unknown)
        {
            string message = $"unknown field '{LogText.Cut(unknown.Name)}' at {LogText.Cut(unknown.Path, 200)}: {method.InputType.Name} has no such field (JSON names are lowerCamelCase, e.g. loadFactor)";
            logger.LogInformation("{Method} refused with InvalidArgument: {Detail}", method.Name, message);
            var bad = new BadRequest { FieldViolations = { new BadRequest.Types.FieldViolation { Field = LogText.Cut(unknown.Path, 200), Description = message } } };
            await WriteAsync(context, 400, (int)Grpc.Core.StatusCode.InvalidArgument, message, bad);
            return;
        }
        request.Body = new MemoryStream(body, writable: false);
        request.ContentLength = body.Length;
        await next(context);
    }

    private Task RefuseTooLargeAsync(HttpContext context, MethodDescriptor method, string message)
    {
        logger.LogInformation("{Method} refused with ResourceExhausted: {Detail}", method.Name, message);
        // The rest of the body is not read: the connection is closed after the answer.
        context.Response.Headers.Connection = "close";
        return WriteAsync(context, StatusCodes.Status429TooManyRequests, (int)Grpc.Core.StatusCode.ResourceExhausted, message,
            new QuotaFailure { Violations = { new QuotaFailure.Types.Violation { Subject = "request_bytes", Description = message } } });
    }

    private static async Task WriteAsync(HttpContext context, int httpStatus, int code, string message, params IMessage[] details)
    {
        var status = new Google.Rpc.Status { Code = code, Message = message };
        foreach (var d in details) status.Details.Add(Any.Pack(d));
        context.Response.StatusCode = httpStatus;
        context.Response.ContentType = "application/json; charset=utf-8";
        await context.Response.WriteAsync(Formatter.Format(status));
    }

    /// <summary>
    /// The first member of the JSON body that the message type has no field for, with its path in the request
    /// (<c>controls.loadFactr</c>, <c>model.nodes[2].xx</c>). Well-known types (Duration) are leaves; a body that is
    /// not JSON is left to the transcoder, which reports it.
    /// </summary>
    public static (string Name, string Path)? UnknownField(byte[] body, MessageDescriptor type)
    {
        try
        {
            using var doc = JsonDocument.Parse(body, new JsonDocumentOptions { MaxDepth = 64 });
            return Walk(doc.RootElement, type, "");
        }
        catch (JsonException) { return null; }
    }

    private static (string, string)? Walk(JsonElement element, MessageDescriptor type, string path)
    {
        if (element.ValueKind != JsonValueKind.Object || type.FullName.StartsWith("google.protobuf.", StringComparison.Ordinal)) return null;
        foreach (var property in element.EnumerateObject())
        {
            var field = type.Fields.InDeclarationOrder().FirstOrDefault(f => f.JsonName == property.Name || f.Name == property.Name);
            string here = path.Length == 0 ? property.Name : $"{path}.{property.Name}";
            if (field is null) return (property.Name, here);
            if (field.FieldType != FieldType.Message) continue;
            if (field.IsMap)
            {
                var valueField = field.MessageType.FindFieldByNumber(2);
                if (valueField.FieldType != FieldType.Message || property.Value.ValueKind != JsonValueKind.Object) continue;
                foreach (var entry in property.Value.EnumerateObject())
                    if (Walk(entry.Value, valueField.MessageType, $"{here}[{entry.Name}]") is { } hit) return hit;
            }
            else if (field.IsRepeated && property.Value.ValueKind == JsonValueKind.Array)
            {
                int i = 0;
                foreach (var item in property.Value.EnumerateArray())
                    if (Walk(item, field.MessageType, $"{here}[{i++}]") is { } hit) return hit;
            }
            else if (Walk(property.Value, field.MessageType, here) is { } hit) return hit;
        }
        return null;
    }
}
