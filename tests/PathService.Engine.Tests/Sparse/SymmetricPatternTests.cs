using PathService.Engine.Sparse;

namespace PathService.Engine.Tests.Sparse;

public class SymmetricPatternTests
{
    [Fact]
    public void FromEntries_MirrorsLowerEntries_MergesDuplicates_AndAddsEveryDiagonal()
    {
        var p = SymmetricPattern.FromEntries(4, new[] { (2, 0), (0, 2), (1, 3), (3, 1), (1, 3), (2, 2) });
        Assert.Equal(4, p.Size);
        Assert.Equal(new[] { 0, 1, 2, 4, 6 }, p.ColumnPointers);
        Assert.Equal(new[] { 0, 1, 0, 2, 1, 3 }, p.RowIndices);
        Assert.Equal(6, p.NonZeroCount);
    }

    [Fact]
    public void FindSlot_FindsEntriesGivenInEitherTriangle_AndReturnsMinusOneWhenAbsent()
    {
        var p = SymmetricPattern.FromEntries(4, new[] { (2, 0), (1, 3) });
        Assert.Equal(p.FindSlot(0, 2), p.FindSlot(2, 0));
        Assert.Equal(0, p.RowIndices[p.FindSlot(2, 0)]);
        Assert.Equal(3, p.RowIndices[p.FindSlot(3, 3)]);
        Assert.Equal(-1, p.FindSlot(0, 1));
        Assert.Equal(-1, p.FindSlot(0, 7));
    }

    [Fact]
    public void Constructor_RejectsColumnWithoutDiagonal()
    {
        var ex = Assert.Throws<ArgumentException>(() => new SymmetricPattern(2, new[] { 0, 1, 2 }, new[] { 0, 0 }));
        Assert.Contains("diagonal", ex.Message);
    }

    [Fact]
    public void Constructor_RejectsRowBelowTheDiagonal()
    {
        var ex = Assert.Throws<ArgumentException>(() => new SymmetricPattern(2, new[] { 0, 2, 3 }, new[] { 0, 1, 1 }));
        Assert.Contains("upper triangle", ex.Message);
    }

    [Fact]
    public void Constructor_RejectsUnsortedOrDuplicateRows()
    {
        Assert.Throws<ArgumentException>(() => new SymmetricPattern(3, new[] { 0, 1, 2, 5 }, new[] { 0, 1, 1, 0, 2 }));
        Assert.Throws<ArgumentException>(() => new SymmetricPattern(3, new[] { 0, 1, 2, 5 }, new[] { 0, 1, 0, 0, 2 }));
    }

    [Fact]
    public void Constructor_RejectsInconsistentPointerArrays()
    {
        Assert.Throws<ArgumentException>(() => new SymmetricPattern(2, new[] { 0, 1 }, new[] { 0 }));
        Assert.Throws<ArgumentException>(() => new SymmetricPattern(1, new[] { 1, 1 }, new[] { 0 }));
        Assert.Throws<ArgumentException>(() => new SymmetricPattern(1, new[] { 0, 2 }, new[] { 0 }));
        Assert.Throws<ArgumentException>(() => new SymmetricPattern(-1, new[] { 0 }, Array.Empty<int>()));
    }

    [Fact]
    public void FromEntries_RejectsIndicesOutsideTheMatrix()
    {
        Assert.Throws<ArgumentException>(() => SymmetricPattern.FromEntries(2, new[] { (0, 2) }));
    }
}
