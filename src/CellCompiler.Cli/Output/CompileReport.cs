using System.Text.Json;
using CellCompiler.Compilation;
using CellCompiler.Input;

namespace CellCompiler.Cli.Output;

/// <summary>Prints a compilation as a readable summary or as one JSON object (contract section 5).</summary>
public static class CompileReport
{
    public static void WriteJson(Stream stream, CompiledModel model, string? onnxPath)
    {
        using var writer = JsonOutput.Writer(stream);
        writer.WriteStartObject();
        writer.WriteString("name", model.Name);
        writer.WriteString("hash", model.Hash);
        writer.WriteString("network_hash", model.NetworkHash);
        writer.WritePropertyName("skeleton");
        model.Skeleton.WriteJson(writer);
        WriteShape(writer, "input_shape", model.InputShape.Dims);
        WriteShape(writer, "output_shape", model.OutputShape.Dims);
        writer.WriteNumber("params", model.Figures.Params);
        writer.WriteNumber("buffers", model.Figures.Buffers);
        writer.WriteNumber("macs", model.Figures.Macs);
        writer.WriteNumber("peak_activation_bytes", model.Figures.PeakActivationBytes);
        writer.WriteStartObject("ops");
        foreach (var (op, count) in model.Figures.OpCounts)
            writer.WriteNumber(op, count);
        writer.WriteEndObject();
        writer.WriteStartArray("warnings");
        foreach (var warning in model.Warnings)
            writer.WriteStringValue(warning);
        writer.WriteEndArray();
        writer.WriteNumber("onnx_bytes", model.OnnxBytes.LongLength);
        if (onnxPath is not null) writer.WriteString("onnx_path", onnxPath);
        writer.WriteNumber("opset", model.Options.Opset);
        writer.WriteNumber("seed", model.Options.Seed);
        writer.WriteEndObject();
        writer.Flush();
        stream.WriteByte((byte)'\n');
    }

    private static void WriteShape(Utf8JsonWriter writer, string name, int[] dims)
    {
        writer.WriteStartArray(name);
        writer.WriteStringValue("N");
        foreach (var d in dims) writer.WriteNumberValue(d);
        writer.WriteEndArray();
    }

    public static void WriteText(TextWriter output, CompiledModel model, string? onnxPath)
    {
        var f = model.Figures;
        output.WriteLine(model.NetworkHash == model.Hash
            ? $"{model.Name}  hash {model.Hash[..16]}"
            : $"{model.Name}  hash {model.Hash[..16]}  network hash ({Input.Skeleton.MergeName(model.Skeleton.Merge)}) {model.NetworkHash[..16]}");
        output.WriteLine($"  skeleton     {DescribeSkeleton(model.Skeleton)}");
        output.WriteLine($"  input        images {model.InputShape}");
        output.WriteLine($"  output       logits {model.OutputShape}");
        output.WriteLine($"  params       {Formatting.Count(f.Params)}");
        output.WriteLine($"  buffers      {Formatting.Count(f.Buffers)}  (BatchNorm running mean and variance)");
        output.WriteLine($"  MACs         {Formatting.Count(f.Macs)}  per sample");
        output.WriteLine($"  peak memory  {Formatting.Bytes(f.PeakActivationBytes)} of activations at batch 1 (estimate: float32, ops in emitted order)");
        output.WriteLine($"  ops          {string.Join(", ", f.OpCounts.Select(kv => $"{kv.Key} {kv.Value}"))}");
        output.WriteLine($"  onnx         {onnxPath ?? "(not written)"}  {Formatting.Bytes(model.OnnxBytes.LongLength)}, opset {model.Options.Opset}, seed {model.Options.Seed}");
        if (model.Warnings.Count == 0) return;
        output.WriteLine($"  warnings     {model.Warnings.Count}");
        foreach (var warning in model.Warnings)
            output.WriteLine($"    - {warning}");
    }

    public static string DescribeSkeleton(Skeleton s) =>
        $"input {s.Input.Channels}x{s.Input.Height}x{s.Input.Width}, stem stride {s.Stem.Stride}{(s.Stem.Pool ? " + pool" : "")}, " +
        $"stages {string.Join(" ", s.Stages.Select(st => $"{st.Cells}x{st.Channels}"))}, " +
        $"reduction {s.Reduction}, merge {Skeleton.MergeName(s.Merge)}, {s.Classes} classes";
}
