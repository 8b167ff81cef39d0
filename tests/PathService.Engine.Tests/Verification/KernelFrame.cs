using MathNet.Numerics.LinearAlgebra;
using PathService.Engine.Elements;

namespace PathService.Engine.Tests.Verification;

/// <summary>
/// A small dense driver for the corotational beam kernel alone, independent of the engine's assembly and continuation:
/// six unknowns per node (translations added, rotations updated R ← exp(Δθ) R), Newton's method with the kernel's
/// symmetric tangent, load control or one prescribed translation (displacement control). For at most a few dozen
/// elements; the verification tests use it to show the kernel's closed-form results on their own.
/// </summary>
internal sealed class KernelFrame
{
    private readonly List<double[]> _nodes = [];
    private readonly List<(int A, int B, double[] Reference)> _elements = [];
    private bool[] _fixed = [];
    public double[] Load = [];
    public double[] U = [];
    public double[] R = [];
    public int Dofs => 6 * _nodes.Count;
    public int Iterations;

    public int AddNode(double x, double y, double z) { _nodes.Add([x, y, z]); return _nodes.Count - 1; }
    public (double X, double Y, double Z) Node(int i) => (_nodes[i][0], _nodes[i][1], _nodes[i][2]);

    public void AddBeam(int a, int b, BeamSection s, double[] orientation, BeamReleases releases = default)
    {
        var reference = new double[CorotationalBeam.ReferenceSize];
        if (!CorotationalBeam.TryPrepare(_nodes[a], _nodes[b], orientation, s, releases, reference))
            throw new InvalidOperationException("degenerate element");
        _elements.Add((a, b, reference));
    }

    /// <summary>n equal elements from node a to a new end node at (x, y, z); returns the node indices along the member.</summary>
    public int[] AddMember(int a, double x, double y, double z, int n, BeamSection s, double[] orientation)
    {
        var ids = new int[n + 1];
        ids[0] = a;
        var (x0, y0, z0) = Node(a);
        for (int k = 1; k <= n; k++)
        {
            double t = (double)k / n;
            ids[k] = AddNode(x0 + t * (x - x0), y0 + t * (y - y0), z0 + t * (z - z0));
            AddBeam(ids[k - 1], ids[k], s, orientation);
        }
        return ids;
    }

    /// <summary>Call after the last node: sizes the state (at rest) and the support and load vectors.</summary>
    public void Start()
    {
        _fixed = new bool[Dofs];
        Load = new double[Dofs];
        U = new double[3 * _nodes.Count];
        R = new double[9 * _nodes.Count];
        for (int i = 0; i < _nodes.Count; i++) { R[9 * i] = 1; R[9 * i + 4] = 1; R[9 * i + 8] = 1; }
    }

    /// <summary>Holds direction d (0–2 translations, 3–5 rotations) of node i.</summary>
    public void Fix(int node, params int[] directions) { foreach (int d in directions) _fixed[6 * node + d] = true; }

    /// <summary>Keeps the structure in the x-y plane: z translation and rotations about x and y held at every node.</summary>
    public void Planar() { for (int i = 0; i < _nodes.Count; i++) Fix(i, 2, 3, 4); }

    public void InternalForce(double[] f, double[]? k)
    {
        Array.Clear(f);
        if (k is not null) Array.Clear(k);
        int n = Dofs;
        Span<double> fe = stackalloc double[12];
        var ke = new double[144];
        foreach (var (a, b, reference) in _elements)
        {
            Assert.True(CorotationalBeam.Evaluate(reference, U.AsSpan(3 * a, 3), R.AsSpan(9 * a, 9), U.AsSpan(3 * b, 3),
                R.AsSpan(9 * b, 9), fe, k is null ? default : ke, default));
            for (int i = 0; i < 12; i++)
            {
                int gi = i < 6 ? 6 * a + i : 6 * b + i - 6;
                f[gi] += fe[i];
                if (k is null) continue;
                for (int j = 0; j < 12; j++)
                {
                    int gj = j < 6 ? 6 * a + j : 6 * b + j - 6;
                    k[n * gi + gj] += ke[12 * i + j];
                }
            }
        }
    }

    /// <summary>Newton's method at load factor λ; the held directions keep their current values. True on convergence.</summary>
    public bool Solve(double lambda, double tolerance = 1e-11, int maxIterations = 40)
    {
        int n = Dofs;
        var f = new double[n];
        var k = new double[n * n];
        var free = Enumerable.Range(0, n).Where(i => !_fixed[i]).ToArray();
        double scale = Math.Max(1e-300, lambda == 0 ? 1 : Math.Abs(lambda) * Load.Max(Math.Abs));
        for (int it = 0; it < maxIterations; it++)
        {
            InternalForce(f, k);
            var r = Vector<double>.Build.Dense(free.Length, i => lambda * Load[free[i]] - f[free[i]]);
            if (lambda == 0) scale = Math.Max(1.0, f.Max(Math.Abs));
            if (r.AbsoluteMaximum() <= tolerance * scale && it > 0) { Iterations = it; return true; }
            var kf = Matrix<double>.Build.Dense(free.Length, free.Length, (i, j) => k[n * free[i] + free[j]]);
            var d = kf.Solve(r);
            Apply(free, d);
            // with EA/l ≫ the bending stiffness the residual's rounding floor lies above a tight force tolerance;
            // a correction at the rounding level of the state ends the iteration as well
            if (d.AbsoluteMaximum() <= 1e-14 * (1 + U.Max(Math.Abs))) { Iterations = it + 1; return true; }
        }
        Iterations = maxIterations;
        return false;
    }

    /// <summary>
    /// Moves held translation <paramref name="direction"/> of <paramref name="node"/> to <paramref name="value"/> from a
    /// converged state: first the tangent's linear response of the free directions to the increment (predictor), then
    /// Newton's method at λ = 0. True on convergence.
    /// </summary>
    public bool SolvePrescribed(int node, int direction, double value)
    {
        int n = Dofs, c = 6 * node + direction;
        var f = new double[n];
        var k = new double[n * n];
        InternalForce(f, k);
        var free = Enumerable.Range(0, n).Where(i => !_fixed[i]).ToArray();
        double dv = value - U[3 * node + direction];
        var kf = Matrix<double>.Build.Dense(free.Length, free.Length, (i, j) => k[n * free[i] + free[j]]);
        var rhs = Vector<double>.Build.Dense(free.Length, i => -k[n * free[i] + c] * dv);
        Apply(free, kf.Solve(rhs));
        U[3 * node + direction] = value;
        return Solve(0);
    }

    private void Apply(int[] free, Vector<double> d)
    {
        Span<double> e = stackalloc double[9], tmp = stackalloc double[9];
        for (int node = 0; node < _nodes.Count; node++)
        {
            var w = new double[3];
            for (int q = 0; q < free.Length; q++)
            {
                int dof = free[q];
                if (dof / 6 != node) continue;
                int dir = dof % 6;
                if (dir < 3) U[3 * node + dir] += d[q];
                else w[dir - 3] = d[q];
            }
            Rotations.Exp(w, e);
            Rotations.Multiply(e, R.AsSpan(9 * node, 9), tmp);
            tmp.CopyTo(R.AsSpan(9 * node, 9));
        }
    }

    /// <summary>Smallest eigenvalue of the symmetric tangent on the free directions at the current state.</summary>
    public double SmallestEigenvalue()
    {
        int n = Dofs;
        var f = new double[n];
        var k = new double[n * n];
        InternalForce(f, k);
        var free = Enumerable.Range(0, n).Where(i => !_fixed[i]).ToArray();
        var kf = Matrix<double>.Build.Dense(free.Length, free.Length, (i, j) => k[n * free[i] + free[j]]);
        return kf.Evd(Symmetricity.Symmetric).EigenValues.Real().Minimum();
    }

    public void SaveState(out double[] u, out double[] r) { u = (double[])U.Clone(); r = (double[])R.Clone(); }
    public void Restore(double[] u, double[] r) { u.CopyTo(U, 0); r.CopyTo(R, 0); }
}
