using PathService.Engine.Model;

namespace PathService.Engine.Tests.Beams;

/// <summary>The DOF layout with 3 or 6 unknowns per node, and the configuration update over it.</summary>
public class DofMapTests
{
    [Fact]
    public void Mixed_nodes_get_offsets_by_their_own_sizes()
    {
        // Nodes 0 and 2 translate only; 1 and 3 also rotate.
        var map = new DofMap([false, true, false, true], [3 + 4, 9 + 0]);
        Assert.Equal([0, 3, 9, 12, 18], map.Offset);
        Assert.Equal(18, map.FullCount);
        Assert.Equal(16, map.FreeCount);
        Assert.Equal(7, map.Full(1, Axis.RotationY));
        Assert.Equal((1, Axis.RotationY), map.Describe(7));
        Assert.Equal((3, Axis.RotationZ), map.Describe(17));
        Assert.Equal((2, Axis.X), map.Describe(9));
        Assert.True(map.Has(1, Axis.RotationZ));
        Assert.False(map.Has(2, Axis.RotationX));
        Assert.Equal(-1, map.EquationOf[7]);
        Assert.Equal(-1, map.EquationOf[9]);
        Assert.Equal(7, map.EquationOf[8]); // the free ones keep full order: 0..6, then 8
        Assert.Equal([6, 15], map.RotationStarts);
    }

    [Fact]
    public void Without_rotating_nodes_the_layout_is_three_per_node()
    {
        var map = new DofMap(3, [4]);
        Assert.Equal([0, 3, 6, 9], map.Offset);
        Assert.False(map.HasRotations);
        for (int d = 0; d < 9; d++) Assert.Equal((d / 3, (Axis)(d % 3)), map.Describe(d));
    }

    [Fact]
    public void Advance_adds_translations_and_composes_rotations()
    {
        var map = new DofMap([true, false], [2]); // node 0 rotates, its z translation held
        var u = new double[9];
        u[2] = 0.25; // prescribed
        // Free: 0 x, 1 y, 2..4 rotations of node 0, 5..7 translations of node 1.
        double[] delta = [1, 2, 0, 0, Math.PI / 3, 4, 5, 6];
        Configuration.Advance(map, u, delta, 0.5);
        Configuration.Advance(map, u, delta, 0.5);
        Assert.Equal([1, 2, 0.25], u[..3]);
        Assert.Equal([4, 5, 6], u[6..]);
        // Two half spins of π/3 about z: ψ = (0, 0, π/3), exact up to the quaternion round trip.
        Assert.Equal(0, u[3], 15);
        Assert.Equal(0, u[4], 15);
        Assert.Equal(Math.PI / 3, u[5], 15);
    }
}
