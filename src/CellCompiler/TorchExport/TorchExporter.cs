using System.Text;
using CellCompiler.Compilation;
using CellCompiler.Input;
using CellCompiler.Lowering;

namespace CellCompiler.TorchExport;

/// <summary>A generated Python file and the classes it defines.</summary>
public sealed record TorchModule(string Source, IReadOnlyList<string> PrimitiveClasses, IReadOnlyList<string> MotifClasses)
{
    /// <summary>The file's bytes: UTF-8 without a byte order mark, "\n" line ends.</summary>
    public byte[] Bytes => new UTF8Encoding(encoderShouldEmitUTF8Identifier: false).GetBytes(Source);
}

/// <summary>
/// `cellc export-torch`: a compiled genotype as one self-contained Python file of torch.nn modules
/// (a class per primitive definition and per motif used, and Network), whose state dict holds
/// exactly the compiled model's weights under the module paths of their node names, so the ONNX
/// file's initializers load by name. Every layer comes from the same lowering as the ONNX model,
/// through <see cref="TorchLayerSink"/>. The text is a pure function of its inputs and this build.
/// </summary>
public static class TorchExporter
{
    private const string WeightsResource = "CellCompiler.TorchExport.weights.py";

    private static readonly Lazy<string> WeightsCode = new(() =>
    {
        using var stream = typeof(TorchExporter).Assembly.GetManifestResourceStream(WeightsResource)
            ?? throw new InvalidOperationException($"the resource {WeightsResource} is missing from the build");
        using var reader = new StreamReader(stream, Encoding.UTF8);
        return reader.ReadToEnd().Replace("\r\n", "\n", StringComparison.Ordinal);
    });

    /// <param name="genotype">The genotype <paramref name="model"/> was compiled from.</param>
    public static TorchModule Export(Genotype genotype, CompiledModel model)
    {
        var liveness = Liveness.Analyse(genotype);
        var usedMotifs = MotifClasses.Used(genotype, liveness);
        var names = new ClassNames();
        var classes = new List<(PyClass Class, string Result)>();
        var primitiveClasses = PrimitiveClasses.Write(genotype, MotifClasses.UsedPrimitives(liveness, usedMotifs), names, classes);
        var primitiveCount = classes.Count;
        var motifClasses = MotifClasses.Write(genotype, liveness, model.Skeleton.Merge, usedMotifs, primitiveClasses, names, classes);
        classes.Add(NetworkClass.Write(model.Skeleton, motifClasses[(genotype.TopLevel, genotype.Cell.Name)]));

        var source = new StringBuilder();
        WriteHeader(source, genotype, model);
        foreach (var (cls, result) in classes)
        {
            source.Append("\n\n");
            cls.Write(source, result);
        }
        source.Append('\n').Append(WeightsCode.Value);
        return new TorchModule(source.ToString(),
            classes.Take(primitiveCount).Select(c => c.Class.Name).ToList(),
            classes.Skip(primitiveCount).SkipLast(1).Select(c => c.Class.Name).ToList());
    }

    private static void WriteHeader(StringBuilder source, Genotype genotype, CompiledModel model)
    {
        var skeleton = model.Skeleton;
        var input = skeleton.Input;
        source.Append("# Written by `cellc export-torch` (cellc ").Append(BuildInfo.Version)
            .Append(", commit ").Append(BuildInfo.Commit).Append("). Regenerate rather than edit.\n");
        source.Append(""""
            """
            A cellc genotype as torch.nn modules: one class per primitive definition and per motif the
            network uses, and Network: the stem, the stages of cells, the reductions and the head.

            build() returns the network (PyTorch's default initialisation). load_onnx_weights(model, path)
            copies in the weights of the ONNX file that `cellc compile` writes for the same genotype
            (GENOTYPE below), skeleton (SKELETON) and any seed, by name:
              - a module path is the ONNX node name with each segment's ":op" dropped and "/" as ".":
                stage1/cell0/e2:reef/e0:anemone/e1:dwconv3x3/conv is stage1.cell0.e2.e0.e1.conv;
              - initializers NODE.weight and NODE.bias are the module's weight and bias; a
                BatchNormalization's NODE.scale, .bias, .mean and .var are weight, bias, running_mean
                and running_var (eps 1e-5; PyTorch's momentum 0.1 is ONNX's momentum 0.9); a Clip's
                NODE.min and NODE.max are nn.ReLU6's fixed bounds 0 and 6.

            python3 THIS_FILE [MODEL.onnx] prints the network's size; given a model, it loads the weights
            and runs one forward pass.
            """

            import sys

            import torch
            from torch import nn


            """").Append('\n');
        Constant(source, "CELLC_VERSION", PyText.Str(BuildInfo.Version));
        Constant(source, "CELLC_COMMIT", PyText.Str(BuildInfo.Commit));
        Constant(source, "GENOTYPE_NAME", PyText.Str(genotype.Name));
        Constant(source, "GENOTYPE_HASH", PyText.Str(model.Hash));
        Constant(source, "GENOTYPE", PyText.Str(Compiler.RecordedGenotype(genotype)), "genotype/1, as in the ONNX metadata");
        Constant(source, "SKELETON", PyText.Str(skeleton.ToJson()), "skeleton/1, as in the ONNX metadata");
        Constant(source, "SEED", PyText.Int(model.Options.Seed), "the seed of the compile this file was written with (weights of any seed load)");
        Constant(source, "OPSET", PyText.Int(model.Options.Opset));
        Constant(source, "INPUT_SHAPE", $"({PyText.Int(input.Channels)}, {PyText.Int(input.Height)}, {PyText.Int(input.Width)})");
        Constant(source, "CLASSES", PyText.Int(skeleton.Classes));
        Constant(source, "PARAMS", PyText.Int(model.Figures.Params), "trainable values, as cellc counts them");
        Constant(source, "BUFFERS", PyText.Int(model.Figures.Buffers), "BatchNorm running statistics, as cellc counts them");
    }

    private static void Constant(StringBuilder source, string name, string value, string? comment = null)
    {
        source.Append(name).Append(" = ").Append(value);
        if (comment is not null) source.Append("  # ").Append(comment);
        source.Append('\n');
    }
}
