using PathService.Cli;
using PathService.Cli.Backends;
using PathService.Cli.Commands;

// pathtrace: the command-line client of PathService, for pipelines and engineers. See docs/cli.md.
const string Usage = """
usage: pathtrace <command> [model] [options]

commands
  trace <model.json|.pb>     trace the equilibrium path, printing each point as it converges
  check <model>              validate the model (all findings at once)
  linear <model>             small-displacement linear analysis   [--load-factor λ]
  buckling <model>           linearised buckling modes            [--modes N]
  batch <folder|glob>        trace every model concurrently       [--parallel N] [--table out.csv]
  sweep <model>              knock-down curve over imperfection amplitudes
                             --amplitudes a,b,c [--unit length|span] [--span S] [--modes 1,2] [--weights w1,w2] [--out DIR]
  demo                       trace the built-in market-hall dome  [--out DIR]

where analyses run
  (default)                  in this process, no server needed
  --server URL[,URL...]      on PathService over gRPC; several URLs are used round-robin
  --api-key KEY              API key of a secured server (default: environment variable PATHSERVICE_API_KEY)
  --ca-file F                trust server certificates issued by this CA (PEM or DER) for https:// URLs

outputs of trace/demo
  --out DIR                  path.csv, path.jsonl, summary.json, curve.svg, shape.svg in DIR
  --csv F --jsonl F --summary F --svg F --shape-svg F   individual files
  --plot-monitored N         which monitored displacement the curve plots (1-based, default 1)
  --shape-at I --shape-scale S   point (needs its full state) and scale of the deformed shape
  --quiet                    no live lines

exit codes: 0 success, 1 usage, 2 invalid input, 3 target not reached, 4 server unavailable, 5 some batch models failed,
            6 authentication failed, 7 refused by the server's limits, 8 restarted trace differs from the points received
""";

using var cts = new CancellationTokenSource();
Console.CancelKeyPress += (_, e) => { e.Cancel = true; cts.Cancel(); };
try
{
    var o = Options.Parse(args);
    if (o.Command is "help" or "--help" or "-h" || o.Has("help")) { Console.WriteLine(Usage); return ExitCodes.Success; }
    await using IAnalysisBackend backend = o.Get("server") is { } server ? new GrpcBackend(server, ConnectionSettings.From(o)) : new InProcessBackend();
    switch (o.Command)
    {
        case "demo":
        {
            var request = RequestReader.Read(DemoModel.Path());
            if (!o.Has("out")) throw new UsageException("demo needs --out DIR for its pictures and tables");
            return await TraceCommand.RunAsync(backend, request, o, cts.Token);
        }
        case "trace": return await TraceCommand.RunAsync(backend, RequestReader.Read(Model(o)), o, cts.Token);
        case "check": return await UnaryCommands.CheckAsync(backend, RequestReader.Read(Model(o)), o, cts.Token);
        case "linear": return await UnaryCommands.LinearAsync(backend, RequestReader.Read(Model(o)), o, cts.Token);
        case "buckling": return await UnaryCommands.BucklingAsync(backend, RequestReader.Read(Model(o)), o, cts.Token);
        case "batch": return await BatchCommand.RunAsync(backend, Model(o), o, cts.Token);
        case "sweep": return await SweepCommand.RunAsync(backend, RequestReader.Read(Model(o)), o, cts.Token);
        default: throw new UsageException($"unknown command '{o.Command}'");
    }
}
catch (UsageException ex) { Console.Error.WriteLine($"pathtrace: {ex.Message}\n\n{Usage}"); return ExitCodes.Usage; }
catch (InputException ex) { Console.Error.WriteLine($"pathtrace: {ex.Message}"); return ExitCodes.InvalidInput; }
catch (AnalysisRejectedException ex)
{
    Console.Error.WriteLine($"pathtrace: {ex.Message}");
    foreach (var f in ex.Findings) Console.Error.WriteLine($"  {f.Field} {f.ItemId}: {f.Message}");
    return ex.ResourceLimit ? ExitCodes.RefusedByLimits : ExitCodes.InvalidInput;
}
catch (AuthenticationFailedException ex) { Console.Error.WriteLine($"pathtrace: authentication failed: {ex.Message}"); return ExitCodes.AuthenticationFailed; }
catch (ReplayMismatchException ex) { Console.Error.WriteLine($"pathtrace: RESULTS DISAGREE: {ex.Message}"); return ExitCodes.ReplayMismatch; }
catch (BackendUnavailableException ex) { Console.Error.WriteLine($"pathtrace: server unavailable: {ex.Message}"); return ExitCodes.ServerUnavailable; }
catch (Grpc.Core.RpcException ex) { Console.Error.WriteLine($"pathtrace: server unavailable: {ex.Status.Detail}"); return ExitCodes.ServerUnavailable; }
catch (HttpRequestException ex) { Console.Error.WriteLine($"pathtrace: server unavailable: {ex.Message}"); return ExitCodes.ServerUnavailable; }
catch (OperationCanceledException) { Console.Error.WriteLine("pathtrace: cancelled"); return ExitCodes.TargetNotReached; }

static string Model(Options o) => o.Positional.FirstOrDefault() ?? throw new UsageException($"{o.Command} needs a model file");

/// <summary>The built-in demo: the market-hall dome shipped beside the executable.</summary>
internal static class DemoModel
{
    public static string Path() => System.IO.Path.Combine(AppContext.BaseDirectory, "demo", "market-hall-dome.json");
}
