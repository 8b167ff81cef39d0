using PathService.Contracts.V1;

namespace PathService.Cli.Output;

/// <summary>
/// The nodes and beam elements of a request as the service numbers them in results: the model's nodes, then the
/// intermediate nodes of each subdivided beam ("&lt;beam id&gt;#k" at s = k/n along the chord, moved by the bow
/// a·sin(πs) towards local y or z), and the beam elements ("&lt;beam id&gt;/k", or the beam id when undivided). The
/// pictures need the initial positions of the intermediate nodes, which results do not repeat.
/// </summary>
internal sealed class FrameGeometry
{
    public List<string> NodeIds { get; } = [];
    /// <summary>Initial coordinates, 3 per node.</summary>
    public List<double> Coordinates { get; } = [];
    public Dictionary<string, int> Index { get; } = new(StringComparer.Ordinal);
    public List<(string Element, string Beam, int Start, int End)> Elements { get; } = [];

    public FrameGeometry(StructureModel model)
    {
        foreach (var n in model.Nodes) Add(n.Id, n.X, n.Y, n.Z);
        foreach (var beam in model.Beams)
        {
            if (!Index.TryGetValue(beam.StartNode, out int i) || !Index.TryGetValue(beam.EndNode, out int j)) continue;
            int n = beam.HasSubdivisions ? Math.Clamp(beam.Subdivisions, 1, 100) : 1;
            double[] a = [Coordinates[3 * i], Coordinates[3 * i + 1], Coordinates[3 * i + 2]];
            double[] c = [Coordinates[3 * j], Coordinates[3 * j + 1], Coordinates[3 * j + 2]];
            var bow = BowDirection(a, c, beam);
            int previous = i;
            for (int k = 1; k <= n; k++)
            {
                int next = j;
                if (k < n)
                {
                    double s = (double)k / n, w = beam.BowAmplitude * Math.Sin(Math.PI * s);
                    next = Add($"{beam.Id}#{k}", a[0] + s * (c[0] - a[0]) + w * bow[0], a[1] + s * (c[1] - a[1]) + w * bow[1], a[2] + s * (c[2] - a[2]) + w * bow[2]);
                }
                Elements.Add((n == 1 ? beam.Id : $"{beam.Id}/{k}", beam.Id, previous, next));
                previous = next;
            }
        }
    }

    private int Add(string id, double x, double y, double z)
    {
        int k = NodeIds.Count;
        NodeIds.Add(id);
        Coordinates.AddRange([x, y, z]);
        Index.TryAdd(id, k);
        return k;
    }

    /// <summary>Unit local y (or z for BOW_PLANE_LOCAL_Z) of a member: y = unit(v − (v·x)x), z = x × y; zero when undefined.</summary>
    private static double[] BowDirection(double[] a, double[] c, Beam beam)
    {
        double[] x = [c[0] - a[0], c[1] - a[1], c[2] - a[2]];
        double lx = Math.Sqrt(x[0] * x[0] + x[1] * x[1] + x[2] * x[2]);
        var v = beam.Orientation ?? new OrientationVector();
        if (!(lx > 0)) return [0, 0, 0];
        for (int q = 0; q < 3; q++) x[q] /= lx;
        double p = v.X * x[0] + v.Y * x[1] + v.Z * x[2];
        double[] y = [v.X - p * x[0], v.Y - p * x[1], v.Z - p * x[2]];
        double ly = Math.Sqrt(y[0] * y[0] + y[1] * y[1] + y[2] * y[2]);
        if (!(ly > 0)) return [0, 0, 0];
        for (int q = 0; q < 3; q++) y[q] /= ly;
        if (beam.BowPlane != BowPlane.LocalZ) return y;
        return [x[1] * y[2] - x[2] * y[1], x[2] * y[0] - x[0] * y[2], x[0] * y[1] - x[1] * y[0]];
    }
}
