using PathService.Engine.Assembly;
using PathService.Engine.Model;

namespace PathService.Engine.Tests.Unit;

/// <summary>
/// The consistent tangent must be the derivative of the internal force: compared with central finite differences
/// (f(u + h e_j) − f(u − h e_j))/2h on random deformed states of a random 3D bar assembly. The truncation error of
/// the central difference is O(h²) and the internal force is cubic in u, so with h = 1e-6 the agreement is ~1e-7 relative.
/// </summary>
public class BarTangentTests
{
    private static ModelDefinition RandomTetrahedra(Random rng)
    {
        var nodes = new List<NodeDefinition>();
        for (int i = 0; i < 6; i++) nodes.Add(new($"n{i}", rng.NextDouble() * 4, rng.NextDouble() * 4, rng.NextDouble() * 4));
        var bars = new List<BarDefinition>();
        for (int i = 0; i < 6; i++)
            for (int j = i + 1; j < 6; j++)
                bars.Add(new($"b{i}{j}", $"n{i}", $"n{j}", 1e5 * (1 + rng.NextDouble()), 1e-2 * (1 + rng.NextDouble()), 50 * (rng.NextDouble() - 0.5)));
        return new ModelDefinition
        {
            Nodes = nodes, Bars = bars,
            GroundSprings = [new("g", "n3", Axis.Z, 77.0)],
            LinkSprings = [new("l", "n4", "n5", Axis.Y, 55.0)],
            Supports = [.. TestModels.Pin("n0"), new("n1", Axis.Y)],
            Loads = LoadCaseDefinition.ReferenceOnly(new NodalLoad("n2", 0, 0, -1)),
        };
    }

    [Theory]
    [InlineData(1)]
    [InlineData(2)]
    [InlineData(3)]
    [InlineData(4)]
    public void Consistent_tangent_equals_central_differences_of_the_internal_force(int seed)
    {
        var rng = new Random(seed);
        var model = StructuralModel.Create(RandomTetrahedra(rng));
        var asm = new StructureAssembler(model);
        int full = 3 * model.NodeCount, n = model.Dofs.FreeCount;
        var u = new double[full];
        for (int i = 0; i < full; i++) if (model.Dofs.EquationOf[i] >= 0) u[i] = 0.4 * (rng.NextDouble() - 0.5);
        var values = new double[asm.Pattern.NonZeroCount];
        asm.Tangent(u, values);
        var kx = new double[n];
        var fp = new double[full];
        var fm = new double[full];
        const double h = 1e-6;
        double scale = values.Max(Math.Abs);
        for (int j = 0; j < n; j++)
        {
            var ej = new double[n];
            ej[j] = 1;
            asm.Multiply(values, ej, kx);
            int dj = model.Dofs.FullOf[j];
            u[dj] += h; asm.InternalForce(u, fp);
            u[dj] -= 2 * h; asm.InternalForce(u, fm);
            u[dj] += h;
            for (int i = 0; i < n; i++)
            {
                int di = model.Dofs.FullOf[i];
                double fd = (fp[di] - fm[di]) / (2 * h);
                Assert.True(Math.Abs(fd - kx[i]) <= 1e-6 * scale, $"K[{i},{j}] = {kx[i]}, finite difference {fd}");
            }
        }
    }
}
