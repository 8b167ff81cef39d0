using PathService.Engine.Model;

namespace PathService.Engine.Tests.Fixtures;

/// <summary>
/// A shallow lattice dome of our own: a crown node and <c>rings</c> rings of <c>perNode</c> nodes on a paraboloid
/// z = rise·(1 − (r/R)²), alternate rings turned by half a bay, circumferential bars on each ring, two diagonals from
/// each node to the next ring out, the outer ring pinned. A vertical load on every free node plus a small extra load
/// on one side so that the path has limit points rather than symmetric bifurcations.
/// </summary>
internal static class LatticeDome
{
    public static ModelDefinition Create(int rings = 3, int perRing = 8, double radius = 12.0, double rise = 1.0,
        double ea = 3.0e5, double nodalLoad = 1.0, double sideLoad = 0.05, int loadedRings = int.MaxValue)
    {
        const double E = 2.1e8;
        var nodes = new List<NodeDefinition> { new("crown", 0, 0, rise) };
        var bars = new List<BarDefinition>();
        var supports = new List<SupportDefinition>();
        var loads = new List<NodalLoad> { new("crown", 0, 0, -nodalLoad) };
        string Id(int ring, int j) => $"r{ring}n{((j % perRing) + perRing) % perRing}";
        for (int k = 1; k <= rings; k++)
        {
            double r = radius * k / rings;
            double z = rise * (1 - (r / radius) * (r / radius));
            double turn = (k % 2) * Math.PI / perRing;
            for (int j = 0; j < perRing; j++)
            {
                double a = 2 * Math.PI * j / perRing + turn;
                string id = Id(k, j);
                nodes.Add(new(id, r * Math.Cos(a), r * Math.Sin(a), z));
                if (k == rings) supports.AddRange(TestModels.Pin(id));
                else if (k <= loadedRings) loads.Add(new(id, Math.Cos(a) > 0.5 ? sideLoad * nodalLoad : 0, 0, -nodalLoad * (Math.Cos(a) > 0.5 ? 1 + sideLoad : 1)));
            }
        }
        int bar = 0;
        string Next() => $"b{bar++}";
        for (int j = 0; j < perRing; j++) bars.Add(new(Next(), "crown", Id(1, j), E, ea / E));
        for (int k = 1; k <= rings; k++)
            for (int j = 0; j < perRing; j++)
            {
                if (k < rings) bars.Add(new(Next(), Id(k, j), Id(k, j + 1), E, ea / E));
                if (k == rings) continue;
                // Alternate rings are turned by half a bay: node j of ring k sits between nodes j-1|j and j|j+1 of ring k+1.
                int shift = k % 2 == 1 ? 0 : -1;
                bars.Add(new(Next(), Id(k, j), Id(k + 1, j + shift), E, ea / E));
                bars.Add(new(Next(), Id(k, j), Id(k + 1, j + shift + 1), E, ea / E));
            }
        return new ModelDefinition
        {
            Name = "shallow lattice dome", Nodes = nodes, Bars = bars, Supports = supports,
            Loads = LoadCaseDefinition.ReferenceOnly([.. loads]),
        };
    }
}
