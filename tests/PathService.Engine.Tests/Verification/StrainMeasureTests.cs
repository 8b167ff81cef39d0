using PathService.Engine.Continuation;
using PathService.Engine.Model;

namespace PathService.Engine.Tests.Verification;

/// <summary>
/// Green-Lagrange against engineering strain for a bar stretched from L0 to ℓ = L0(1 + ε):
/// ε_GL = (ℓ² − L0²)/(2L0²) = ε + ε²/2, so the relative gap (ε_GL − ε)/ε = ε/2: 2.5 % at 5 % and 15 % at 30 %
/// (common practice, no source). The bar force is N = A0 S ℓ/L0 = EA0 (ε + ε²/2)(1 + ε).
/// </summary>
public class StrainMeasureTests
{
    [Theory]
    [InlineData(0.05, 0.025)]
    [InlineData(0.30, 0.15)]
    public void Green_Lagrange_strain_exceeds_engineering_strain_by_half_its_square(double engineering, double relativeGap)
    {
        const double L0 = 2.0, E = 2.0e8, A = 1e-4;
        var def = new ModelDefinition
        {
            Nodes = [new("fixed", 0, 0, 0), new("free", L0, 0, 0)],
            Bars = [new("tie", "fixed", "free", E, A)],
            Supports = [.. TestModels.Pin("fixed"), new("free", Axis.Y), new("free", Axis.Z)],
            Loads = LoadCaseDefinition.ReferenceOnly(new NodalLoad("free", 1.0, 0, 0)),
        };
        var end = new DofReference("free", Axis.X);
        var events = new PathTracer(StructuralModel.Create(def), new SolverControls
        {
            Method = ContinuationMethod.DisplacementControl, ControlDof = end, InitialDisplacementIncrement = 0.01,
            TargetDisplacement = engineering * L0, ResidualTolerance = 1e-13, MaxPoints = 200,
        }).Trace().ToList();
        var last = events.OfType<PathPoint>().Last();
        Assert.NotNull(last.State);
        double gl = last.State!.BarStrains[0];
        Assert.Equal(engineering + engineering * engineering / 2, gl, 1e-12);
        Assert.Equal(relativeGap, (gl - engineering) / engineering, 1e-10);
        Assert.Equal(E * A * gl * (1 + engineering), last.LoadFactor, 1e-9 * last.LoadFactor);
        Assert.Equal(last.LoadFactor, last.State.BarForces[0], 1e-9 * last.LoadFactor);
    }
}
