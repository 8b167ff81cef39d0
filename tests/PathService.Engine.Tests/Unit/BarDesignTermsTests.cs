using PathService.Engine.Elements;

namespace PathService.Engine.Tests.Unit;

/// <summary>The bar's analytic design derivatives against complex-step derivatives of its own formulas (exact to rounding).</summary>
public class BarDesignTermsTests
{
    [Theory]
    [InlineData(0.0)]     // at rest
    [InlineData(0.004)]   // stretched and turned
    [InlineData(-0.03)]   // shortened and turned
    public void Analytic_derivatives_equal_complex_step_derivatives(double amount)
    {
        var bar = new BarDesignTerms.Bar(0.3, -0.2, 1.1, 2.4, 0.9, 1.7, 1.3e-3, 2.1e8, 4.0e4,
            amount * 2.1 + 0.01 * amount, amount * 1.1, -amount * 0.6, 7.85, 1.35, 0, 0, -9.81);
        double[] phi = [0.2, -0.7, 0.4, -0.5, 0.1, 0.9];
        var f = new double[24]; var w = new double[24]; var q = new double[8];
        var fc = new double[24]; var wc = new double[24]; var qc = new double[8];
        BarDesignTerms.Derivatives(bar, phi, f, w, q);
        ComplexStepBarTerms.Derivatives(bar, phi, fc, wc, qc);
        for (int k = 0; k < 24; k++)
        {
            Assert.True(Close(fc[k], f[k], Scale(fc, k)), $"force derivative {k}: analytic {f[k]:G17}, complex step {fc[k]:G17}");
            Assert.True(Close(wc[k], w[k], Scale(wc, k)), $"self-weight derivative {k}: analytic {w[k]:G17}, complex step {wc[k]:G17}");
        }
        for (int k = 0; k < 8; k++)
            Assert.True(Close(qc[k], q[k], qc.Max(Math.Abs)), $"quadratic-form derivative {k}: analytic {q[k]:G17}, complex step {qc[k]:G17}");
    }

    // Relative to the largest entry of the same parameter's vector: measured agreement is ~1e-15 of it.
    private static double Scale(double[] v, int k) => Math.Max(1e-300, Enumerable.Range(3 * (k / 3), 3).Max(i => Math.Abs(v[i])));
    private static bool Close(double expected, double actual, double scale) => Math.Abs(expected - actual) <= 1e-13 * scale;
}
