using Microsoft.AspNetCore.Builder;
using Microsoft.Extensions.DependencyInjection;
using PathService.Server.Hosting;

namespace PathService.Client.Tests;

/// <summary>The real server composition on loopback with free ports, for the client library's tests.</summary>
public sealed class LoopbackServer : IAsyncDisposable
{
    private WebApplication _app = null!;
    public Uri GrpcUrl { get; private set; } = null!;

    public static async Task<LoopbackServer> StartAsync(params string[] settings)
    {
        string[] args =
        [
            "--PathService:ListenAddress=127.0.0.1", "--PathService:GrpcPort=0", "--PathService:HttpPort=-1",
            "--Serilog:MinimumLevel:Default=Warning", .. settings.Select(s => "--PathService:" + s),
        ];
        var app = ServerHost.Build(args);
        await app.StartAsync();
        return new LoopbackServer { _app = app, GrpcUrl = new Uri(app.Services.GetRequiredService<BoundEndpoints>().GrpcUrl) };
    }

    /// <summary>Begins a shutdown's draining without stopping: health reports NOT_SERVING, new analyses get UNAVAILABLE.</summary>
    public Task DrainAsync() => _app.Services.GetRequiredService<ShutdownCoordinator>().StoppingAsync(CancellationToken.None);

    public async ValueTask DisposeAsync() => await _app.StopAsync();
}
