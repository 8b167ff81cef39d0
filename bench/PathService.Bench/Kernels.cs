using BenchmarkDotNet.Attributes;
using PathService.Bench.Models;
using PathService.Engine.Assembly;
using PathService.Engine.Model;
using PathService.Engine.Sparse;

namespace PathService.Bench;

/// <summary>Micro-benchmarks of the hot kernels of an iteration on the roof model.</summary>
[MemoryDiagnoser]
public class Kernels
{
    private StructureAssembler _asm = null!;
    private SupernodalLdlFactorization _factor = null!;
    private double[] _values = null!, _u = null!, _force = null!, _b1 = null!, _b2 = null!;

    [Params(20, 60)]
    public int M { get; set; }

    [GlobalSetup]
    public void Setup()
    {
        var model = StructuralModel.Create(SpaceTrussRoof.Create(M));
        _asm = new StructureAssembler(model);
        _values = new double[_asm.Pattern.NonZeroCount];
        _u = new double[3 * model.NodeCount];
        _force = new double[3 * model.NodeCount];
        _asm.Tangent(_u, _values);
        _factor = new SupernodalLdlFactorization(LdlSymbolic.Analyze(_asm.Pattern));
        _factor.Factorize(_values);
        _b1 = new double[_asm.Pattern.Size];
        _b2 = new double[_asm.Pattern.Size];
        model.Dofs.Gather(model.ReferenceLoad, _b1);
    }

    [Benchmark] public LdlStatus Factorize() => _factor.Factorize(_values);
    [Benchmark] public void AssembleTangent() => _asm.Tangent(_u, _values);
    [Benchmark] public void InternalForce() => _asm.InternalForce(_u, _force);
    [Benchmark] public void Solve2() => _factor.Solve2(_b1, _b2);

    /// <summary>One full Newton iteration of an arc-length step: tangent, factorisation, both solves, residual.</summary>
    [Benchmark]
    public void Iteration()
    {
        _asm.Tangent(_u, _values);
        _factor.Factorize(_values);
        _factor.Solve2(_b1, _b2);
        _asm.InternalForce(_u, _force);
    }
}
