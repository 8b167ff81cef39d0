using System.CommandLine;
using PathService.Cli;
using PathService.Cli.Backends;
using PathService.Client.Calls;

// pathtrace: the command-line client of PathService, for pipelines and engineers. See docs/cli.md.
using var cts = new CancellationTokenSource();
Console.CancelKeyPress += (_, e) => { e.Cancel = true; cts.Cancel(); };

var root = CommandLine.Build();
// "pathtrace" alone and "pathtrace help [command]" show the help, as --help does.
if (args.Length == 0) args = ["--help"];
else if (args[0] == "help") args = [.. args[1..], "--help"];
if (!args[0].StartsWith('-') && !root.Subcommands.Any(c => c.Name == args[0]))
{
    if (CommandLine.RenamedInV1.TryGetValue(args[0], out var now)) Console.Error.WriteLine($"pathtrace: command '{args[0]}' was renamed in v1: {now}");
    Console.Error.WriteLine($"pathtrace: unknown command '{args[0]}' (commands: {string.Join(", ", root.Subcommands.Select(c => c.Name))}; see pathtrace --help)");
    return ExitCodes.Usage;
}

var parsed = root.Parse(args);
if (parsed.Errors.Count > 0)
{
    foreach (var error in parsed.Errors) Console.Error.WriteLine($"pathtrace: {error.Message}");
    foreach (var token in parsed.UnmatchedTokens)
        if (CommandLine.RenamedInV1.TryGetValue(token.Split('=')[0], out var now)) Console.Error.WriteLine($"pathtrace: {token.Split('=')[0]} was renamed in v1: {now}");
    string command = parsed.CommandResult.Command == root ? "" : parsed.CommandResult.Command.Name + " ";
    Console.Error.WriteLine($"see 'pathtrace {command}--help' for the options");
    return ExitCodes.Usage;
}

try
{
    // The exceptions below decide the exit code, so System.CommandLine's own handler (and its Ctrl+C handling) is off.
    return await parsed.InvokeAsync(new InvocationConfiguration { EnableDefaultExceptionHandler = false, ProcessTerminationTimeout = null }, cts.Token);
}
catch (UsageException ex) { Console.Error.WriteLine($"pathtrace: {ex.Message}"); return ExitCodes.Usage; }
catch (InputException ex) { Console.Error.WriteLine($"pathtrace: {ex.Message}"); return ExitCodes.InvalidInput; }
catch (AnalysisRejectedException ex)
{
    Console.Error.WriteLine($"pathtrace: {ex.Message}");
    foreach (var f in ex.Findings) Console.Error.WriteLine($"  {f.Field} {f.ItemId}: {f.Message}");
    return ex.Kind switch
    {
        PathService.Application.Errors.RefusalKind.OverLimit => ExitCodes.RefusedByLimits,
        PathService.Application.Errors.RefusalKind.OutOfTime => ExitCodes.TargetNotReached,
        _ => ExitCodes.InvalidInput,
    };
}
catch (AuthenticationFailedException ex) { Console.Error.WriteLine($"pathtrace: authentication failed: {ex.Message}"); return ExitCodes.AuthenticationFailed; }
catch (ReplayMismatchException ex) { Console.Error.WriteLine($"pathtrace: RESULTS DISAGREE: {ex.Message}"); return ExitCodes.ReplayMismatch; }
catch (BackendUnavailableException ex) { Console.Error.WriteLine($"pathtrace: server unavailable: {ex.Message}"); return ExitCodes.ServerUnavailable; }
catch (Grpc.Core.RpcException ex) { Console.Error.WriteLine($"pathtrace: server unavailable: {ex.Status.Detail}"); return ExitCodes.ServerUnavailable; }
catch (HttpRequestException ex) { Console.Error.WriteLine($"pathtrace: server unavailable: {ex.Message}"); return ExitCodes.ServerUnavailable; }
catch (OperationCanceledException) { Console.Error.WriteLine("pathtrace: cancelled"); return ExitCodes.TargetNotReached; }

/// <summary>The built-in demo: the market-hall dome shipped beside the executable.</summary>
internal static class DemoModel
{
    public static string Path() => System.IO.Path.Combine(AppContext.BaseDirectory, "demo", "market-hall-dome.json");
}

/// <summary>A command line that parses but cannot be run as given.</summary>
internal sealed class UsageException(string message) : Exception(message);
