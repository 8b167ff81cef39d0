// Test matrices for the sparse LDL^T solver: random sparse symmetric patterns and
// values (definite and shifted indefinite), a 2D grid Laplacian and a 3D truss
// lattice stiffness, plus conversion to MathNet dense matrices for reference.

using MathNet.Numerics.LinearAlgebra;
using PathService.Engine.Sparse;

namespace PathService.Engine.Tests.Sparse;

internal static class SparseTestMatrices
{
    /// <summary>Random symmetric pattern with about offDiagonalPerColumn off-diagonal entries per column.</summary>
    public static SymmetricPattern RandomPattern(int n, double offDiagonalPerColumn, int seed)
    {
        var rng = new Random(seed);
        var entries = new List<(int, int)>();
        int count = (int)(n * offDiagonalPerColumn / 2);
        for (int e = 0; e < count && n > 1; e++)
            entries.Add((rng.Next(n), rng.Next(n)));
        return SymmetricPattern.FromEntries(n, entries);
    }

    /// <summary>Values on the pattern: off-diagonals uniform in [-1,1], diagonal from diagonalValue(i, sum |off-diagonals of row i|).</summary>
    public static double[] RandomValues(SymmetricPattern pattern, int seed, Func<int, double, Random, double> diagonalValue)
    {
        var rng = new Random(seed);
        int n = pattern.Size;
        var values = new double[pattern.NonZeroCount];
        var rowAbsSum = new double[n];
        for (int j = 0; j < n; j++)
            for (int s = pattern.ColumnPointers[j]; s < pattern.ColumnPointers[j + 1]; s++)
            {
                int i = pattern.RowIndices[s];
                if (i == j) continue;
                values[s] = 2 * rng.NextDouble() - 1;
                rowAbsSum[i] += Math.Abs(values[s]);
                rowAbsSum[j] += Math.Abs(values[s]);
            }
        for (int j = 0; j < n; j++)
            values[pattern.ColumnPointers[j + 1] - 1] = diagonalValue(j, rowAbsSum[j], rng);
        return values;
    }

    /// <summary>Strictly diagonally dominant with positive diagonal, hence symmetric positive definite.</summary>
    public static double[] RandomSpdValues(SymmetricPattern pattern, int seed) =>
        RandomValues(pattern, seed, (_, absSum, rng) => absSum + 0.1 + rng.NextDouble());

    public static Matrix<double> ToDense(SymmetricPattern pattern, ReadOnlySpan<double> values)
    {
        int n = pattern.Size;
        var a = Matrix<double>.Build.Dense(n, n);
        for (int j = 0; j < n; j++)
            for (int s = pattern.ColumnPointers[j]; s < pattern.ColumnPointers[j + 1]; s++)
            {
                int i = pattern.RowIndices[s];
                a[i, j] = values[s];
                a[j, i] = values[s];
            }
        return a;
    }

    /// <summary>Values of the symmetric dense matrix a on the pattern's slots.</summary>
    public static double[] FromDense(SymmetricPattern pattern, Matrix<double> a)
    {
        var values = new double[pattern.NonZeroCount];
        for (int j = 0; j < pattern.Size; j++)
            for (int s = pattern.ColumnPointers[j]; s < pattern.ColumnPointers[j + 1]; s++)
                values[s] = a[pattern.RowIndices[s], j];
        return values;
    }

    /// <summary>5-point Laplacian of an m-by-m grid with Dirichlet boundary (SPD).</summary>
    public static (SymmetricPattern Pattern, double[] Values) GridLaplacian(int m)
    {
        int n = m * m;
        var entries = new List<(int, int)>();
        for (int x = 0; x < m; x++)
            for (int y = 0; y < m; y++)
            {
                int v = x * m + y;
                if (x + 1 < m) entries.Add((v, v + m));
                if (y + 1 < m) entries.Add((v, v + 1));
            }
        var pattern = SymmetricPattern.FromEntries(n, entries);
        var values = new double[pattern.NonZeroCount];
        for (int j = 0; j < n; j++)
            for (int s = pattern.ColumnPointers[j]; s < pattern.ColumnPointers[j + 1]; s++)
                values[s] = pattern.RowIndices[s] == j ? 4 : -1;
        return (pattern, values);
    }

    /// <summary>
    /// Stiffness of a 3D truss on an nx×ny×nz node lattice, 3 degrees of freedom per node: bars along
    /// the axes and, with probability diagonalProbability, along face diagonals; a grounding spring
    /// of stiffness `ground` on every degree of freedom makes it positive definite.
    /// </summary>
    public static (SymmetricPattern Pattern, double[] Values) TrussLattice(int nx, int ny, int nz, double diagonalProbability, int seed, double ground = 1e-2)
    {
        var rng = new Random(seed);
        int Node(int x, int y, int z) => (x * ny + y) * nz + z;
        var bars = new List<(int A, int B, double Ux, double Uy, double Uz)>();
        var steps = new (int, int, int, bool)[]
        {
            (1, 0, 0, true), (0, 1, 0, true), (0, 0, 1, true),
            (1, 1, 0, false), (1, -1, 0, false), (1, 0, 1, false), (0, 1, 1, false),
        };
        for (int x = 0; x < nx; x++)
            for (int y = 0; y < ny; y++)
                for (int z = 0; z < nz; z++)
                    foreach (var (dx, dy, dz, always) in steps)
                    {
                        int x2 = x + dx, y2 = y + dy, z2 = z + dz;
                        if (x2 >= nx || y2 < 0 || y2 >= ny || z2 >= nz) continue;
                        if (!always && rng.NextDouble() >= diagonalProbability) continue;
                        double length = Math.Sqrt(dx * dx + dy * dy + dz * dz);
                        bars.Add((Node(x, y, z), Node(x2, y2, z2), dx / length, dy / length, dz / length));
                    }

        int n = 3 * nx * ny * nz;
        var entries = new List<(int, int)>();
        foreach (var (a, b, _, _, _) in bars)
            for (int r = 0; r < 3; r++)
                for (int c = 0; c < 3; c++)
                {
                    entries.Add((3 * a + r, 3 * a + c));
                    entries.Add((3 * b + r, 3 * b + c));
                    entries.Add((3 * a + r, 3 * b + c));
                }
        var pattern = SymmetricPattern.FromEntries(n, entries);

        // Assemble k u u^T into the (a,a), (b,b) blocks and -k u u^T into (a,b).
        var values = new double[pattern.NonZeroCount];
        foreach (var (a, b, ux, uy, uz) in bars)
        {
            double k = 1 + rng.NextDouble();
            double[] u = { ux, uy, uz };
            for (int r = 0; r < 3; r++)
                for (int c = 0; c < 3; c++)
                {
                    double kuu = k * u[r] * u[c];
                    if (3 * a + r <= 3 * a + c) values[pattern.FindSlot(3 * a + r, 3 * a + c)] += kuu;
                    if (3 * b + r <= 3 * b + c) values[pattern.FindSlot(3 * b + r, 3 * b + c)] += kuu;
                    values[pattern.FindSlot(3 * a + r, 3 * b + c)] -= kuu;
                }
        }
        for (int i = 0; i < n; i++) values[pattern.FindSlot(i, i)] += ground;
        return (pattern, values);
    }

    /// <summary>y = A x for A given by pattern and values (both triangles).</summary>
    public static double[] Multiply(SymmetricPattern pattern, ReadOnlySpan<double> values, ReadOnlySpan<double> x)
    {
        var yv = new double[pattern.Size];
        for (int j = 0; j < pattern.Size; j++)
            for (int s = pattern.ColumnPointers[j]; s < pattern.ColumnPointers[j + 1]; s++)
            {
                int i = pattern.RowIndices[s];
                yv[i] += values[s] * x[j];
                if (i != j) yv[j] += values[s] * x[i];
            }
        return yv;
    }

    public static double RelativeResidual(SymmetricPattern pattern, ReadOnlySpan<double> values, ReadOnlySpan<double> x, ReadOnlySpan<double> b)
    {
        var ax = Multiply(pattern, values, x);
        double r = 0, nb = 0;
        for (int i = 0; i < b.Length; i++)
        {
            r += (ax[i] - b[i]) * (ax[i] - b[i]);
            nb += b[i] * b[i];
        }
        return Math.Sqrt(r) / Math.Sqrt(nb);
    }

    public static double[] RandomVector(int n, int seed)
    {
        var rng = new Random(seed);
        var v = new double[n];
        for (int i = 0; i < n; i++) v[i] = 2 * rng.NextDouble() - 1;
        return v;
    }
}
