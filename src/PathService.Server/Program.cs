using PathService.Server.Hosting;

// Entry point: everything is composed in ServerHost so that tests and the benchmark run the very same server.
var app = ServerHost.Build(args);
app.Lifetime.ApplicationStarted.Register(() =>
{
    // Say which port is which: with port 0 the numbers are only known now.
    var ep = app.Services.GetRequiredService<BoundEndpoints>();
    app.Logger.LogInformation("PathService ready: gRPC {GrpcUrl}, HTTP/1.1 {HttpUrl}",
        ep.Grpc is { } g ? BoundEndpoints.UrlOf(g, ep.Tls) : "-", ep.Http is { } h ? BoundEndpoints.UrlOf(h, ep.Tls) : "disabled");
});
await app.RunAsync();

/// <summary>Marker for tooling that looks for the entry assembly's Program type.</summary>
public partial class Program;
