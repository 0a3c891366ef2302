using CellCompiler.Onnx;

namespace CellCompiler.Tests;

/// <summary>
/// The normal sampler behind He-normal weights, checked against published properties of the standard
/// normal distribution: the 68-95-99.7 rule (P(|Z|&lt;1) = 0.682689, P(|Z|&lt;2) = 0.954500,
/// P(|Z|&lt;3) = 0.997300), mean 0, variance 1, skewness 0, kurtosis 3.
/// </summary>
public sealed class WeightDistributionTests
{
    private const int Samples = 2_000_000;

    private static float[] Draw(long seed)
    {
        var values = new float[Samples];
        SeededRandom.ForTensor(seed, "test.weight").FillNormal(values, 1.0);
        return values;
    }

    [Fact]
    public void SamplesFollowTheStandardNormal()
    {
        var x = Draw(1);
        double mean = x.Average(v => (double)v);
        double variance = x.Average(v => (v - mean) * (v - mean));
        double skew = x.Average(v => Math.Pow(v - mean, 3)) / Math.Pow(variance, 1.5);
        double kurtosis = x.Average(v => Math.Pow(v - mean, 4)) / (variance * variance);
        // Standard errors at n = 2e6: mean 0.0007, variance 0.001, skewness 0.0017, kurtosis 0.0035.
        Assert.InRange(mean, -0.004, 0.004);
        Assert.InRange(variance, 0.995, 1.005);
        Assert.InRange(skew, -0.01, 0.01);
        Assert.InRange(kurtosis, 2.98, 3.02);
        Assert.InRange(x.Count(v => Math.Abs(v) < 1) / (double)Samples, 0.682689 - 0.002, 0.682689 + 0.002);
        Assert.InRange(x.Count(v => Math.Abs(v) < 2) / (double)Samples, 0.954500 - 0.001, 0.954500 + 0.001);
        Assert.InRange(x.Count(v => Math.Abs(v) < 3) / (double)Samples, 0.997300 - 0.0002, 0.997300 + 0.0002);
        // The tail beyond the ziggurat's base strip (r = 3.4426) is sampled separately: P(|Z| > 3.4426) = 0.000576.
        Assert.InRange(x.Count(v => Math.Abs(v) > 3.442619855899) / (double)Samples, 0.000576 - 0.0001, 0.000576 + 0.0001);
    }

    [Fact]
    public void StreamsAreDeterministicPerSeedAndTensorName()
    {
        var a = new float[1000];
        var b = new float[1000];
        var c = new float[1000];
        SeededRandom.ForTensor(5, "stage0/cell0/e0:conv1x1/conv.weight").FillNormal(a, 1);
        SeededRandom.ForTensor(5, "stage0/cell0/e0:conv1x1/conv.weight").FillNormal(b, 1);
        SeededRandom.ForTensor(5, "stage0/cell0/e1:conv1x1/conv.weight").FillNormal(c, 1);
        Assert.Equal(a, b);
        Assert.NotEqual(a, c);
    }
}
