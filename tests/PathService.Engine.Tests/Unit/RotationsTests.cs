using PathService.Engine.Elements;

namespace PathService.Engine.Tests.Unit;

/// <summary>
/// The finite-rotation toolkit: exp and log are inverse to each other at every angle up to π, exp agrees with the
/// power series of the matrix exponential (an independent definition), and T⁻¹ and its derivative are the derivatives
/// they claim to be (central differences), across the switch between series and closed forms.
/// </summary>
public class RotationsTests
{
    private static double[] RandomVector(Random rng, double length)
    {
        var v = new double[3];
        for (int i = 0; i < 3; i++) v[i] = rng.NextDouble() - 0.5;
        double n = Math.Sqrt(v[0] * v[0] + v[1] * v[1] + v[2] * v[2]);
        for (int i = 0; i < 3; i++) v[i] *= length / n;
        return v;
    }

    /// <summary>exp(Θ) = Σ Θᵏ/k!, summed until the terms vanish (the definition, no trigonometry).</summary>
    private static double[] SeriesExp(double[] theta)
    {
        var s = new double[9];
        Rotations.Spin(theta, s);
        var r = new double[9] { 1, 0, 0, 0, 1, 0, 0, 0, 1 };
        var term = (double[])r.Clone();
        var next = new double[9];
        for (int k = 1; k < 60; k++)
        {
            Rotations.Multiply(term, s, next);
            for (int i = 0; i < 9; i++) { term[i] = next[i] / k; r[i] += term[i]; }
        }
        return r;
    }

    public static TheoryData<double> Angles => new() { 0, 1e-12, 1e-7, 1e-3, 0.0499, 0.0501, 0.2999, 0.3001, 1.0, 2.0, 2.8, 3.1, 3.14159 };

    [Theory]
    [MemberData(nameof(Angles))]
    public void Log_of_exp_returns_the_rotation_vector_and_exp_matches_the_power_series(double angle)
    {
        var rng = new Random(7 + (int)(angle * 1000));
        for (int trial = 0; trial < 20; trial++)
        {
            var theta = RandomVector(rng, angle);
            var r = new double[9];
            Rotations.Exp(theta, r);
            var reference = SeriesExp(theta);
            // measured ≤ 1.1×10⁻¹⁵ (exp) and ≤ 8.9×10⁻¹⁶ (log, 4.4×10⁻¹⁶ near π) over all angles
            for (int i = 0; i < 9; i++) Assert.True(Math.Abs(r[i] - reference[i]) < 1e-14, $"exp entry {i}: {r[i]} vs {reference[i]}");
            var back = new double[3];
            Rotations.Log(r, back);
            for (int i = 0; i < 3; i++)
                Assert.True(Math.Abs(back[i] - theta[i]) < 1e-14, $"log component {i}: {back[i]} vs {theta[i]} at |θ| = {angle}");
        }
    }

    [Theory]
    [MemberData(nameof(Angles))]
    public void Inverse_tangent_is_the_derivative_of_log_for_spin_increments(double angle)
    {
        if (angle > 3) return; // the log is not differentiable through π; the element never meets local angles near it
        var rng = new Random(11 + (int)(angle * 1000));
        var theta = RandomVector(rng, angle);
        var r = new double[9];
        Rotations.Exp(theta, r);
        var ti = new double[9];
        Rotations.InverseTangent(theta, ti);
        const double h = 1e-6;
        var e = new double[9]; var rp = new double[9]; var tp = new double[3]; var tm = new double[3];
        for (int k = 0; k < 3; k++)
        {
            var w = new double[3]; w[k] = h;
            Rotations.Exp(w, e); Rotations.Multiply(e, r, rp); Rotations.Log(rp, tp);
            w[k] = -h;
            Rotations.Exp(w, e); Rotations.Multiply(e, r, rp); Rotations.Log(rp, tm);
            for (int i = 0; i < 3; i++)
            {
                double fd = (tp[i] - tm[i]) / (2 * h);
                Assert.True(Math.Abs(fd - ti[3 * i + k]) < 2e-9, // measured ≤ 1.9×10⁻¹⁰ (truncation of the difference)
                     $"T⁻¹[{i},{k}] = {ti[3 * i + k]}, difference {fd} at |θ| = {angle}");
            }
        }
    }

    [Theory]
    [MemberData(nameof(Angles))]
    public void Derivative_of_the_transposed_inverse_tangent_matches_central_differences(double angle)
    {
        if (angle > 3) return;
        var rng = new Random(13 + (int)(angle * 1000));
        var theta = RandomVector(rng, angle);
        var m = RandomVector(rng, 2.5);
        var d = new double[9];
        Rotations.InverseTangentTransposedDerivative(theta, m, d);
        const double h = 1e-6;
        var vp = new double[3]; var vm = new double[3];
        for (int k = 0; k < 3; k++)
        {
            var tp = (double[])theta.Clone(); tp[k] += h;
            var tm = (double[])theta.Clone(); tm[k] -= h;
            Rotations.ApplyInverseTangentTransposed(tp, m, vp);
            Rotations.ApplyInverseTangentTransposed(tm, m, vm);
            for (int i = 0; i < 3; i++)
            {
                double fd = (vp[i] - vm[i]) / (2 * h);
                Assert.True(Math.Abs(fd - d[3 * i + k]) < 3e-9, // measured ≤ 3.1×10⁻¹⁰
                     $"D[{i},{k}] = {d[3 * i + k]}, difference {fd} at |θ| = {angle}");
            }
        }
    }

    [Fact]
    public void Series_and_closed_forms_of_the_inverse_tangent_coefficients_meet_at_the_switch()
    {
        // Just below the switch (series) and just above (closed form), η and μ must agree with their first-order
        // Taylor extrapolation to rounding: a wrong series coefficient would show as a jump.
        double below = 0.3 - 1e-9, above = 0.3 + 1e-9;
        var (eb, mb) = Rotations.InverseTangentCoefficients(below);
        var (ea, ma) = Rotations.InverseTangentCoefficients(above);
        // dη/dθ = μθ; dμ/dθ ≈ θ/3780 (from the series 1/360 + θ²/7560 + …)
        Assert.True(Math.Abs(ea - eb - mb * 0.3 * 2e-9) < 1e-15, $"η jumps by {ea - eb}");
        // measured: η 1.3×10⁻¹⁶; μ 1.6×10⁻¹³ (the closed form of μ loses digits like 10⁻¹⁶/θ⁴ at the switch)
        Assert.True(Math.Abs(ma - mb) < 2e-12, $"μ jumps by {ma - mb}");
        // and the known limits at zero: η → 1/12, μ → 1/360
        var (e0, m0) = Rotations.InverseTangentCoefficients(0);
        Assert.Equal(1.0 / 12, e0, 15);
        Assert.Equal(1.0 / 360, m0, 15);
    }
}
