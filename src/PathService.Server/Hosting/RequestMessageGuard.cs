using System.Buffers.Binary;
using Google.Protobuf;
using Microsoft.Extensions.Options;
using PathService.Server.Security;
using PathService.Server.Configuration;

namespace PathService.Server.Hosting;

/// <summary>
/// Checks the single request message of every unary and server-streaming RPC of the contract (taken from the service
/// descriptors, <see cref="ContractCatalog"/>, so a new RPC is covered without being listed) before gRPC sees it.
/// Authentication comes first (<see cref="CallPolicy"/>): a caller without a valid key gets UNAUTHENTICATED or
/// PERMISSION_DENIED before a byte of its body is read. grpc-dotnet reports a message that
/// does not parse (random, truncated or corrupted bytes) as UNKNOWN "Exception was thrown by handler", because the
/// deserialiser runs outside the service; bad input must get INVALID_ARGUMENT. So this middleware reads the (bounded)
/// body, checks the gRPC frame and parses the message; a bad one gets a trailers-only INVALID_ARGUMENT (an oversized one
/// RESOURCE_EXHAUSTED), a good one is handed on unchanged. The cost is one extra parse of the request.
/// </summary>
public sealed class RequestMessageGuard(RequestDelegate next, IOptions<PathServiceOptions> options, CallPolicy policy, ILogger<RequestMessageGuard> logger)
{

    private readonly int _maxBytes = options.Value.Limits.MaxRequestBytes > 0 ? options.Value.Limits.MaxRequestBytes : int.MaxValue - 64;

    public async Task InvokeAsync(HttpContext context)
    {
        var request = context.Request;
        if (!HttpMethods.IsPost(request.Method)
            || request.ContentType is not { } type || !type.StartsWith("application/grpc", StringComparison.OrdinalIgnoreCase)
            || type.StartsWith("application/grpc-web", StringComparison.OrdinalIgnoreCase)
            || !ContractCatalog.SingleRequestMethods.TryGetValue(request.Path.Value ?? "", out var method))
        {
            await next(context);
            return;
        }
        var admission = policy.Admit(request.Path.Value!, request.Headers[policy.Header].FirstOrDefault(), out _);
        if (policy.RefusalOf(admission) is { } refusal)
        {
            await RefuseAsync(context, (int)refusal.StatusCode, refusal.Detail);
            return;
        }
        var parser = ContractCatalog.ParserOf(method);

        // Read at most the limit plus the frame header plus one byte, to tell "too large" from "exactly the limit".
        long cap = (long)_maxBytes + 6;
        using var buffer = new MemoryStream();
        var chunk = new byte[16 * 1024];
        int read;
        try
        {
            while ((read = await request.Body.ReadAsync(chunk, context.RequestAborted)) > 0)
            {
                buffer.Write(chunk, 0, read);
                if (buffer.Length > cap)
                {
                    await RefuseAsync(context, 8, $"the request message is larger than {_maxBytes} bytes, the limit of this server");
                    return;
                }
            }
        }
        catch (Exception ex) when (context.RequestAborted.IsCancellationRequested || ex is IOException or OperationCanceledException)
        {
            // The client went away during the upload: nobody is left to answer, and it is not a server fault.
            logger.LogInformation("{Method}: the client aborted the call while sending the request ({ExceptionType})", method.Name, ex.GetType().Name);
            context.Abort();
            return;
        }
        byte[] body = buffer.ToArray();
        string? problem = Check(body, parser, request.Headers["grpc-encoding"].ToString());
        if (problem is not null)
        {
            logger.LogInformation("{Method} refused with InvalidArgument: {Detail}", method.Name, LogText.Cut(problem, 200));
            await RefuseAsync(context, 3, problem);
            return;
        }
        request.Body = new MemoryStream(body, writable: false);
        await next(context);
    }

    private string? Check(byte[] body, MessageParser parser, string encoding)
    {
        if (body.Length == 0) return "the request carries no message";
        if (body.Length < 5) return "the request message is truncated (incomplete gRPC frame header)";
        byte flag = body[0];
        uint length = BinaryPrimitives.ReadUInt32BigEndian(body.AsSpan(1, 4));
        if (flag > 1) return $"invalid gRPC frame flag {flag}";
        if (flag == 1)
        {
            // Compressed: grpc-dotnet decompresses and checks the message itself; only the missing encoding is ours to report.
            if (string.IsNullOrEmpty(encoding) || encoding == "identity") return "the request message is flagged compressed but no grpc-encoding was given";
            return null;
        }
        if (length > _maxBytes) return null; // left to grpc-dotnet: RESOURCE_EXHAUSTED with its own message
        if (body.Length - 5 < length) return $"the request message is truncated: {body.Length - 5} of {length} bytes arrived";
        if (body.Length - 5 > length) return "the request carries more than one message; this method takes exactly one";
        try
        {
            parser.ParseFrom(body, 5, (int)length);
            return null;
        }
        catch (InvalidProtocolBufferException ex)
        {
            return $"the request message is not a valid protobuf encoding of the method's request type: {ex.Message}";
        }
    }

    private static async Task RefuseAsync(HttpContext context, int code, string message)
    {
        // Trailers-only response: status and message in the headers, no body.
        var response = context.Response;
        response.StatusCode = StatusCodes.Status200OK;
        response.ContentType = "application/grpc";
        response.Headers["grpc-status"] = code.ToString(System.Globalization.CultureInfo.InvariantCulture);
        response.Headers["grpc-message"] = Uri.EscapeDataString(message);
        await response.CompleteAsync();
    }
}
