namespace CellCompiler.Vocabulary.Kinds;

/// <summary>`maxpool`: MaxPool k x k, stride 1, pads (k - 1) / 2.</summary>
public sealed class MaxPoolKind : PrimitiveKind
{
    public override string Name => "maxpool";
    public override KindFamily Family => KindFamily.Pooling;
    public override bool Trainable => false;
    public override IReadOnlySet<PrimitiveParameter> Parameters { get; } = new HashSet<PrimitiveParameter> { PrimitiveParameter.Kernel };

    public override T Lower<T>(PrimitiveDefinition d, ILayerSink<T> sink, T x) => sink.Pool(x, new PoolLayer(PoolKind.Max, d.Kernel), "pool");
}

/// <summary>`avgpool`: AveragePool k x k, stride 1, pads (k - 1) / 2, count_include_pad 0.</summary>
public sealed class AvgPoolKind : PrimitiveKind
{
    public override string Name => "avgpool";
    public override KindFamily Family => KindFamily.Pooling;
    public override bool Trainable => false;
    public override IReadOnlySet<PrimitiveParameter> Parameters { get; } = new HashSet<PrimitiveParameter> { PrimitiveParameter.Kernel };

    public override T Lower<T>(PrimitiveDefinition d, ILayerSink<T> sink, T x) => sink.Pool(x, new PoolLayer(PoolKind.Average, d.Kernel), "pool");
}
