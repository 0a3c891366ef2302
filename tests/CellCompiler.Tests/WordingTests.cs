namespace CellCompiler.Tests;

/// <summary>The one helper for plurals and three significant digits in everything printed for a person.</summary>
public sealed class WordingTests
{
    [Theory]
    [InlineData(0.012643, "0.0126")]
    [InlineData(9.996, "10.0")]      // rounding up to the next power of ten keeps three digits, not four
    [InlineData(12345.6, "12,346")]
    [InlineData(-0.5, "-0.500")]
    [InlineData(1e-19, "0")]         // past the 15 digits Math.Round can keep (a computed interval end at 0)
    [InlineData(0.0, "0")]
    public void SignificantKeepsThreeDigits(double value, string expected) =>
        Assert.Equal(expected, Wording.Significant(value));

    [Fact]
    public void CountedPicksTheNounForTheNumber()
    {
        Assert.Equal("1 level", Wording.Counted(1, "level"));
        Assert.Equal("2 levels", Wording.Counted(2, "level"));
        Assert.Equal("1,500 samples", Wording.Counted(1500, "sample"));
    }
}
