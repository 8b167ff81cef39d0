using PathService.Engine.Elements;

namespace PathService.Engine.Tests.Beams;

/// <summary>
/// The multiplicative rotation update R ← exp(Δθ̂)·R on rotation vectors (<see cref="RotationVector"/>), checked against
/// matrix products and the closed forms of rotations about one axis (Argyris 1982, "An excursion into large rotations").
/// </summary>
public class RotationUpdateTests
{
    private static double[] Matrix(double x, double y, double z)
    {
        var r = new double[9];
        RotationVector.ToMatrix(x, y, z, r);
        return r;
    }

    private static double[] Product(double[] a, double[] b)
    {
        var c = new double[9];
        for (int i = 0; i < 3; i++)
            for (int j = 0; j < 3; j++)
                for (int k = 0; k < 3; k++) c[3 * i + j] += a[3 * i + k] * b[3 * k + j];
        return c;
    }

    private static double MaxDifference(double[] a, double[] b) => a.Zip(b, (x, y) => Math.Abs(x - y)).Max();

    [Fact]
    public void Exponential_of_a_quarter_turn_about_z_maps_x_to_y()
    {
        var r = Matrix(0, 0, Math.PI / 2);
        // R e_x = e_y: first column (0, 1, 0).
        Assert.Equal(0, r[0], 15);
        Assert.Equal(1, r[3], 15);
        Assert.Equal(0, r[6], 15);
    }

    [Fact]
    public void A_full_turn_returns_to_the_identity()
    {
        double[] axis = [0.48, -0.6, 0.64]; // unit
        var r = Matrix(2 * Math.PI * axis[0], 2 * Math.PI * axis[1], 2 * Math.PI * axis[2]);
        // Measured 1.6e-16 (matrix) and 2.9e-16 (ψ); bounds ten times that.
        Assert.True(MaxDifference(r, [1, 0, 0, 0, 1, 0, 0, 0, 1]) < 2e-15);
        // Composed in 8 spins of π/4 each, the stored rotation vector returns to zero.
        var psi = new double[3];
        for (int k = 0; k < 8; k++) RotationVector.Compose(psi, Math.PI / 4 * axis[0], Math.PI / 4 * axis[1], Math.PI / 4 * axis[2]);
        Assert.True(psi.Max(Math.Abs) < 3e-15, $"ψ after a full turn: ({psi[0]:G3}, {psi[1]:G3}, {psi[2]:G3})");
    }

    [Fact]
    public void Increments_about_a_fixed_axis_add_up_to_one_rotation()
    {
        double[] axis = [2 / 3.0, 1 / 3.0, -2 / 3.0];
        var psi = new double[3];
        double[] steps = [0.1, 0.35, -0.05, 0.9, 0.7];
        foreach (double a in steps) RotationVector.Compose(psi, a * axis[0], a * axis[1], a * axis[2]);
        double total = steps.Sum();
        // Measured 4.4e-16; 14 decimals allow 5e-15.
        for (int q = 0; q < 3; q++) Assert.Equal(total * axis[q], psi[q], 14);
    }

    [Fact]
    public void Composition_is_the_matrix_product_with_the_increment_on_the_left()
    {
        double[] psi = [0.4, -1.1, 0.7];
        double[] spin = [-0.3, 0.5, 0.9];
        var expected = Product(Matrix(spin[0], spin[1], spin[2]), Matrix(psi[0], psi[1], psi[2]));
        var updated = (double[])psi.Clone();
        RotationVector.Compose(updated, spin[0], spin[1], spin[2]);
        double error = MaxDifference(Matrix(updated[0], updated[1], updated[2]), expected);
        // Measured 2.2e-16; the bound is ten times that (rounding of two exponentials and one logarithm).
        Assert.True(error < 2e-15, $"error {error:G3}");
        // Rotations do not commute: the other order is a different rotation.
        var other = Product(Matrix(psi[0], psi[1], psi[2]), Matrix(spin[0], spin[1], spin[2]));
        Assert.True(MaxDifference(other, expected) > 0.1);
    }

    [Fact]
    public void Rotation_past_half_a_turn_is_stored_as_the_equivalent_one_the_other_way()
    {
        var psi = new double[3];
        RotationVector.Compose(psi, 0, 0, 2.0);
        RotationVector.Compose(psi, 0, 0, 2.0); // 4 rad about z = 4 − 2π about z
        Assert.Equal(4 - 2 * Math.PI, psi[2], 14);
        Assert.Equal(0, psi[0], 15);
        Assert.Equal(0, psi[1], 15);
    }

    [Fact]
    public void Matrices_stay_orthonormal_for_small_and_large_angles()
    {
        foreach (double a in new[] { 1e-9, 1e-5, 1e-3, 0.5, 3.0, Math.PI })
        {
            var r = Matrix(a * 0.6, a * 0.0, a * -0.8);
            var rt = new double[9];
            for (int i = 0; i < 3; i++) for (int j = 0; j < 3; j++) rt[3 * i + j] = r[3 * j + i];
            // Measured at most 2.2e-16 (series below 1e-4 rad, closed form above); bound ten times that.
            Assert.True(MaxDifference(Product(r, rt), [1, 0, 0, 0, 1, 0, 0, 0, 1]) < 2e-15, $"angle {a}");
        }
    }
}
