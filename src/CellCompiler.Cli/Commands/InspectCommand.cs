using System.CommandLine;
using CellCompiler.Cli.Output;
using CellCompiler.Inspection;

namespace CellCompiler.Cli.Commands;

/// <summary>`cellc inspect`: any ONNX model's interface, op counts, params, buffers and MACs (contract section 4 rules).</summary>
public static class InspectCommand
{
    /// <summary>Text output shows at most this many nodes whose MACs could not be computed (JSON lists them all).</summary>
    private const int ListedNodes = 10;

    /// <summary>Longer metadata values are cut in the text output (JSON keeps them whole).</summary>
    private const int MetadataChars = 600;

    public static Command Create()
    {
        var model = new Argument<string>("MODEL") { Description = "ONNX model file (.onnx), made by cellc or any other tool." };
        var json = new Option<bool>("--json") { Description = "Print one JSON object instead of the summary." };

        var command = new Command("inspect",
            "Describe any ONNX model: inputs and outputs with shapes, op counts, params and buffers, MACs per sample by the " +
            "contract's rules where shapes are known (stated by the model or propagated along the graph), opset, producer " +
            "and metadata_props. Exit 2 if the file is missing or not an ONNX model.");
        command.Arguments.Add(model);
        command.Options.Add(json);

        command.SetAction(parse =>
        {
            var path = parse.GetValue(model)!;
            var inspection = ModelInspector.InspectFile(path);
            if (parse.GetValue(json))
            {
                using var stdout = Console.OpenStandardOutput();
                InspectionJson.Write(stdout, inspection, path);
            }
            else
            {
                WriteText(Console.Out, inspection, path);
            }
            return ExitCodes.Ok;
        });
        return command;
    }

    public static void WriteText(TextWriter output, ModelInspection m, string path)
    {
        var opsets = string.Join(", ", m.OpsetImports.Select(o => $"{o.DisplayDomain} {o.Version}"));
        output.WriteLine($"{path}  {Formatting.Bytes(m.ModelBytes)}, ONNX IR {m.IrVersion}, opset {opsets}");
        var producer = $"{m.ProducerName} {m.ProducerVersion}".Trim();
        output.WriteLine($"  producer      {(producer.Length > 0 ? producer : "(not stated)")}");
        output.WriteLine($"  graph         {(m.GraphName.Length > 0 ? m.GraphName : "(no name)")}");
        WriteTensors(output, "inputs", m.Inputs);
        WriteTensors(output, "outputs", m.Outputs);
        output.WriteLine($"  nodes         {m.NodeCount}: {string.Join(", ", m.OpCounts.Select(kv => $"{kv.Key} {kv.Value}"))}");
        output.WriteLine($"  initializers  {m.InitializerCount} tensors, {Formatting.Count(m.InitializerElements)} elements");
        output.WriteLine($"  params        {Formatting.Count(m.Params)}");
        output.WriteLine($"  buffers       {Formatting.Count(m.Buffers)}  (BatchNorm running mean and variance)");
        if (m.Macs is { } macs)
        {
            output.WriteLine($"  MACs          {Formatting.Count(macs)}  per sample (Conv, Gemm, MatMul)");
        }
        else
        {
            var total = m.OpCounts.Where(kv => kv.Key is "Conv" or "Gemm" or "MatMul").Sum(kv => kv.Value);
            output.WriteLine($"  MACs          cannot be computed: {m.MacsNotComputed.Count} of {total} Conv/Gemm/MatMul nodes lack the shapes; " +
                             $"the others make {Formatting.Count(m.MacsKnown)} per sample");
            foreach (var node in m.MacsNotComputed.Take(ListedNodes))
                output.WriteLine($"    - {node.Node} ({node.OpType}): {node.Reason}");
            if (m.MacsNotComputed.Count > ListedNodes)
                output.WriteLine($"    - ... and {m.MacsNotComputed.Count - ListedNodes} more (see --json)");
        }
        output.WriteLine($"  shapes        of {m.Shapes.Declared + m.Shapes.Inferred + m.Shapes.Unknown} computed tensors: " +
                         $"{m.Shapes.Declared} stated by the model, {m.Shapes.Inferred} propagated by cellc, {m.Shapes.Unknown} unknown");
        if (m.Metadata.Count == 0)
        {
            output.WriteLine("  metadata      (none)");
        }
        else
        {
            var width = m.Metadata.Keys.Max(k => k.Length);
            var first = true;
            foreach (var (key, value) in m.Metadata)
            {
                output.WriteLine($"  {(first ? "metadata" : ""),-12}  {key.PadRight(width)}  {Shorten(value)}");
                first = false;
            }
        }
        if (m.Notes.Count == 0) return;
        output.WriteLine("  notes");
        foreach (var note in m.Notes)
            output.WriteLine($"    - {note}");
    }

    private static void WriteTensors(TextWriter output, string label, IReadOnlyList<TensorInfo> tensors)
    {
        if (tensors.Count == 0)
        {
            output.WriteLine($"  {label,-12}  (none)");
            return;
        }
        var width = tensors.Max(t => t.Name.Length);
        for (var i = 0; i < tensors.Count; i++)
            output.WriteLine($"  {(i == 0 ? label : ""),-12}  {tensors[i].Name.PadRight(width)}  {tensors[i].ElemType} {tensors[i].ShapeText}");
    }

    private static string Shorten(string value)
    {
        var flat = value.Replace("\r", "\\r", StringComparison.Ordinal).Replace("\n", "\\n", StringComparison.Ordinal);
        return flat.Length <= MetadataChars ? flat : $"{flat[..MetadataChars]}... ({value.Length:N0} chars; see --json)";
    }
}
