using System.Diagnostics;
using PathService.Bench.Models;
using PathService.Engine.Assembly;
using PathService.Engine.Model;
using PathService.Engine.Sparse;

namespace PathService.Bench;

/// <summary>One numeric factorisation per roof size and ordering: size of the factor, operations and rate.</summary>
public static class ScalingCommand
{
    public static int Run(Options o)
    {
        var sizes = o.String("sizes", "10,20,40,60,80,120").Split(',').Select(int.Parse).ToArray();
        int repeats = o.Int("repeats", 3);
        double referenceLimit = o.Double("reference-flops", 3e9);
        // --numeric false: orderings and flop counts only (no factorisation timed).
        bool numeric = o.String("numeric", "true") != "false";
        Console.WriteLine($"machine: {Machine.Describe()}");
        Console.WriteLine("|   m |   DOFs | nnz(K) | ordering | order+symb (ms) | nnz(L) | flops | supernodal (ms) | GFlop/s | scalar reference (ms) | GFlop/s | assembly (ms) |");
        Console.WriteLine("|----:|-------:|-------:|:---------|----------------:|-------:|------:|----------------:|--------:|----------------------:|--------:|--------------:|");
        foreach (int m in sizes)
        {
            var model = StructuralModel.Create(SpaceTrussRoof.Create(m));
            var asm = new StructureAssembler(model);
            var values = new double[asm.Pattern.NonZeroCount];
            var u = new double[3 * model.NodeCount];
            double tAsm = Measure.MedianSeconds(() => asm.Tangent(u, values), repeats);
            long nnzFull = 2L * asm.Pattern.NonZeroCount - asm.Pattern.Size;
            foreach (var ordering in o.String("orderings", "amd,nd,gnd,natural").Split(',').Select(ParseOrdering))
            {
                var clock = Stopwatch.StartNew();
                var symbolic = OrderingChoice.Analyze(model, asm.Pattern, ordering);
                double tSym = clock.Elapsed.TotalSeconds;
                double flops = symbolic.FactorFlopCount;
                string name = ordering switch { OrderingMethod.Natural => "natural", OrderingMethod.NestedDissection => "ND", OrderingMethod.GraphNestedDissection => "graph ND", OrderingMethod.Automatic => $"auto ({symbolic.Ordering})", _ => "AMD" };
                if (!numeric || (ordering == OrderingMethod.Natural && flops > 2e10))
                {
                    Console.WriteLine($"| {m,3} | {asm.Pattern.Size,6} | {nnzFull,6} | {name,-8} | {tSym * 1e3,15:F0} | {symbolic.FactorNonZeroCount,6} | {flops,5:E2} | (skipped) | | | | |");
                    continue;
                }
                var f = new SupernodalLdlFactorization(symbolic);
                double tFac = Measure.MedianSeconds(() => f.Factorize(values), repeats);
                string refCol = "", refRate = "";
                if (flops <= referenceLimit)
                {
                    var r = new LdlFactorization(symbolic);
                    double tRef = Measure.MedianSeconds(() => r.Factorize(values), 1);
                    refCol = $"{tRef * 1e3:F1}";
                    refRate = $"{flops / tRef / 1e9:F2}";
                }
                Console.WriteLine($"| {m,3} | {asm.Pattern.Size,6} | {nnzFull,6} | {name,-8} | {tSym * 1e3,15:F0} | {symbolic.FactorNonZeroCount,6} | {flops,5:E2} | {tFac * 1e3,15:F1} | {flops / tFac / 1e9,7:F2} | {refCol,21} | {refRate,7} | {tAsm * 1e3,13:F1} |");
            }
        }
        return 0;
    }

    private static OrderingMethod ParseOrdering(string name) => name.Trim() switch
    {
        "amd" => OrderingMethod.ApproximateMinimumDegree,
        "nd" => OrderingMethod.NestedDissection,
        "gnd" => OrderingMethod.GraphNestedDissection,
        "natural" => OrderingMethod.Natural,
        "auto" => OrderingMethod.Automatic,
        _ => throw new ArgumentException($"--orderings: unknown ordering '{name}' (amd, nd, gnd, natural, auto)"),
    };
}
