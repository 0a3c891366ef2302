namespace CellCompiler.Graph;

/// <summary>What an initializer counts as in the figures (contract section 4).</summary>
public enum WeightRole
{
    /// <summary>Trainable: counted in params.</summary>
    Param,
    /// <summary>BatchNormalization running statistics: counted in buffers.</summary>
    Buffer,
    /// <summary>A fixed constant (e.g. Clip's bounds): counted in neither.</summary>
    Constant,
}

/// <summary>How an initializer's values are drawn (contract section 3, "Weights").</summary>
public enum WeightFill
{
    /// <summary>Normal with standard deviation <see cref="WeightSpec.Value"/> (He: sqrt(2 / fan_in)).</summary>
    HeNormal,
    /// <summary>Uniform in +-<see cref="WeightSpec.Value"/>.</summary>
    Uniform,
    /// <summary>Every element equals <see cref="WeightSpec.Value"/>.</summary>
    Constant,
}

/// <summary>One initializer an op owns, named "{op name}.{Suffix}". Dims empty means a scalar.</summary>
public sealed record WeightSpec(string Suffix, long[] Dims, WeightRole Role, WeightFill Fill, double Value)
{
    public static WeightSpec Zeros(string suffix, long[] dims, WeightRole role) => new(suffix, dims, role, WeightFill.Constant, 0);
    public static WeightSpec Ones(string suffix, long[] dims, WeightRole role) => new(suffix, dims, role, WeightFill.Constant, 1);

    public long Elements
    {
        get
        {
            long n = 1;
            foreach (var d in Dims) n *= d;
            return n;
        }
    }
}
