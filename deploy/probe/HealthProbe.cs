using Grpc.Core;
using Grpc.Health.V1;
using Grpc.Net.Client;

namespace PathService.Probe;

/// <summary>
/// Asks grpc.health.v1.Health/Check on the local server and turns the answer into an exit code: 0 when the service is
/// SERVING, 1 otherwise (not serving, unknown service, unreachable, timeout). Usage:
/// <c>pathservice-probe [--address URL] [--service NAME] [--timeout SECONDS]</c>. Without --address it asks
/// http://127.0.0.1:{PathService__GrpcPort or 5180}, the port the server itself reads from the same variable.
/// </summary>
public static class HealthProbe
{
    public const int Healthy = 0, Unhealthy = 1;

    public static async Task<int> RunAsync(string[] args, Func<string, string?> env)
    {
        string? address = null, service = "";
        double timeout = 3;
        for (int i = 0; i + 1 < args.Length; i += 2)
        {
            switch (args[i])
            {
                case "--address": address = args[i + 1]; break;
                case "--service": service = args[i + 1]; break;
                case "--timeout": timeout = double.Parse(args[i + 1], System.Globalization.CultureInfo.InvariantCulture); break;
                default: Console.Error.WriteLine($"pathservice-probe: unknown option {args[i]}"); return Unhealthy;
            }
        }
        address ??= $"http://127.0.0.1:{(int.TryParse(env("PathService__GrpcPort"), out int p) && p > 0 ? p : 5180)}";
        var (status, detail) = await CheckAsync(address, service, TimeSpan.FromSeconds(timeout));
        Console.WriteLine($"{address} '{service}': {detail}");
        return status == HealthCheckResponse.Types.ServingStatus.Serving ? Healthy : Unhealthy;
    }

    /// <summary>The serving status of <paramref name="service"/>, or Unknown with the reason when the call failed.</summary>
    public static async Task<(HealthCheckResponse.Types.ServingStatus Status, string Detail)> CheckAsync(string address, string service, TimeSpan timeout)
    {
        try
        {
            using var channel = GrpcChannel.ForAddress(address);
            var client = new Health.HealthClient(channel);
            var reply = await client.CheckAsync(new HealthCheckRequest { Service = service }, deadline: DateTime.UtcNow + timeout);
            return (reply.Status, reply.Status.ToString());
        }
        catch (RpcException ex)
        {
            return (HealthCheckResponse.Types.ServingStatus.Unknown, $"{ex.StatusCode}: {ex.Status.Detail}");
        }
    }
}
