// Bench command: trace (one arc-length trace of a generated roof with its cost breakdown), scaling (one
// factorisation per roof size and ordering), sensitivity (design sensitivities of a critical point against one
// factorisation), frame (one trace of a rigid-jointed lattice shell of beams), kernels (BenchmarkDotNet micro-benchmarks).

using PathService.Bench;

var command = args.Length > 0 ? args[0] : "trace";
var options = Options.Parse(args.Skip(1).ToArray());
switch (command)
{
    case "trace": return TraceCommand.Run(options);
    case "scaling": return ScalingCommand.Run(options);
    case "sensitivity": return SensitivityCommand.Run(options);
    case "frame": return FrameCommand.Run(options);
    case "kernels":
        BenchmarkDotNet.Running.BenchmarkRunner.Run<Kernels>(args: args.Skip(1).ToArray());
        return 0;
    default:
        Console.Error.WriteLine("usage: PathService.Bench trace [--m 60] [--points 30] [--threads N] | scaling [--sizes 10,20,40,60,80,120] | sensitivity [--m 60] [--repeats 7] | frame [--m 57] [--subdivisions 1] [--points 30] | kernels [BenchmarkDotNet args]");
        return 2;
}
