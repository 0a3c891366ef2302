using System.CommandLine;
using System.Text;
using CellCompiler.Cli.Output;
using CellCompiler.Input;
using CellCompiler.Inspection;

namespace CellCompiler.Cli.Commands;

/// <summary>`cellc inspect`: any ONNX model's interface, op counts, params, buffers and MACs (contract section 4 rules).</summary>
public static class InspectCommand
{
    /// <summary>Text output shows at most this many nodes whose MACs could not be computed (JSON lists them all).</summary>
    private const int ListedNodes = 10;

    /// <summary>Text output names at most this many places where shapes were lost (JSON lists them all).</summary>
    private const int ListedGaps = 5;

    /// <summary>The text layout's width; long values wrap under their column instead of running on.</summary>
    private const int Width = 100;

    /// <summary>A metadata value longer than this many wrapped lines is cut in the text output (JSON keeps it whole).</summary>
    private const int MetadataLines = 4;

    /// <summary>Text output lists at most this many inputs, outputs and metadata entries each (JSON has them all).</summary>
    private const int ListedEntries = 40;

    /// <summary>Free text from the file (producer, names, the op list) wraps to at most this many lines.</summary>
    private const int TextLines = 4;

    /// <summary>Metadata keys up to this long share the key column; a longer key gets a line of its own.</summary>
    private const int KeyColumn = 24;

    /// <summary>Where the values of the labelled lines start.</summary>
    private const string Indent = "                ";

    public static Command Create()
    {
        var model = new Argument<string>("MODEL") { Description = "ONNX model file (.onnx), made by cellc or any other tool." };
        var json = new Option<bool>("--json") { Description = "Print one JSON object instead of the summary." };

        var command = new Command("inspect",
            "Describe any ONNX model: inputs and outputs with shapes, op counts, params and buffers, MACs per sample by the " +
            "contract's rules (Conv and Gemm) where shapes are known (stated by the model or propagated along the graph), opset, " +
            "producer and metadata_props. Exit 2 if the file is missing, too large or not an ONNX model.");
        command.Arguments.Add(model);
        command.Options.Add(json);

        command.SetAction(parse =>
        {
            var path = parse.GetValue(model)!;
            ModelInspection inspection;
            try { inspection = ModelInspector.InspectFile(path); }
            catch (InputException e)
            {
                // The message quotes the path and parts of the file: make it safe to print before it reaches the terminal.
                throw new InputException(TerminalText.Safe(e.Origin), e.JsonPath, TerminalText.Safe(e.Problem));
            }
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

    /// <summary>The summary for a person. Every text taken from the file passes through <see cref="TerminalText.Safe"/>.</summary>
    public static void WriteText(TextWriter output, ModelInspection m, string path)
    {
        var lines = new List<string>();
        var opsets = string.Join(", ", m.OpsetImports.Select(o => $"{o.DisplayDomain} {o.Version}"));
        lines.Add($"{path}  {Formatting.Bytes(m.ModelBytes)}, ONNX IR {m.IrVersion}, opset {opsets}");
        var producer = $"{m.ProducerName} {m.ProducerVersion}".Trim();
        Labelled(lines, "producer", producer.Length > 0 ? producer : "(not stated)");
        Labelled(lines, "graph", m.GraphName.Length > 0 ? m.GraphName : "(no name)");
        Tensors(lines, "inputs", m.Inputs);
        Tensors(lines, "outputs", m.Outputs);
        Labelled(lines, "nodes", $"{m.NodeCount:N0}: {string.Join(", ", m.OpCounts.Select(kv => $"{kv.Key} {kv.Value:N0}"))}", maxLines: 8);
        Labelled(lines, "initializers", $"{m.InitializerCount:N0} tensors, {Formatting.Count(m.InitializerElements)} elements");
        Labelled(lines, "params", Formatting.Count(m.Params));
        Labelled(lines, "buffers", $"{Formatting.Count(m.Buffers)}  (BatchNormalization running mean and variance)");
        Macs(lines, m);
        Shapes(lines, m);
        Metadata(lines, m.Metadata);
        if (m.Notes.Count > 0)
        {
            lines.Add("  notes");
            foreach (var note in m.Notes)
                lines.AddRange(Wrap(note, "    - ", "      ", TextLines));
        }
        foreach (var line in lines)
            output.WriteLine(TerminalText.Safe(line));
    }

    private static void Labelled(List<string> lines, string label, string value, int maxLines = TextLines) =>
        lines.AddRange(Wrap(TerminalText.Safe(value), $"  {label,-12}  ", Indent, maxLines));

    private static void More(List<string> lines, int total, string what)
    {
        if (total > ListedEntries) lines.Add($"{Indent}... and {total - ListedEntries:N0} more {what} (see --json)");
    }

    private static void Tensors(List<string> lines, string label, IReadOnlyList<TensorInfo> tensors)
    {
        if (tensors.Count == 0)
        {
            Labelled(lines, label, "(none)");
            return;
        }
        var shown = tensors.Take(ListedEntries).ToList();
        var names = shown.Select(t => TerminalText.Safe(t.Name)).ToList();
        var width = Math.Min(names.Max(n => n.Length), KeyColumn);
        for (var i = 0; i < shown.Count; i++)
            lines.AddRange(Wrap($"{names[i].PadRight(width)}  {shown[i].ElemType} {TerminalText.Safe(shown[i].ShapeText)}",
                $"  {(i == 0 ? label : ""),-12}  ", Indent, TextLines));
        More(lines, tensors.Count, label);
    }

    /// <summary>MACs: what is counted is said on the line (Conv and Gemm, contract section 4); other ops are named in the notes.</summary>
    private static void Macs(List<string> lines, ModelInspection m)
    {
        if (m.Macs is { } macs)
        {
            Labelled(lines, "MACs", $"{Formatting.Count(macs)}  per sample, Conv and Gemm only (the contract's rule)");
            return;
        }
        var counted = m.OpCounts.Where(kv => kv.Key is "Conv" or "Gemm").Sum(kv => kv.Value);
        Labelled(lines, "MACs", $"not computed: {m.MacsNotComputed.Count:N0} of {counted:N0} Conv and Gemm nodes lack shapes " +
                                $"(the rest make {Formatting.Count(m.MacsKnown)} per sample)");
        ShapeGap? previous = null;
        foreach (var node in m.MacsNotComputed.Take(ListedNodes))
        {
            lines.AddRange(Wrap(TerminalText.Safe($"{node.Node} ({node.OpType}): {node.Reason}"), "    - ", "      ", 3));
            if (node.ShapeLostAt is { } gap && gap != previous)
                lines.AddRange(Wrap(TerminalText.Safe($"shape lost at {Describe(gap)}"), "      ", "        ", 3));
            previous = node.ShapeLostAt;
        }
        if (m.MacsNotComputed.Count > ListedNodes)
            lines.Add($"    - ... and {m.MacsNotComputed.Count - ListedNodes:N0} more (see --json)");
    }

    private static string Describe(ShapeGap gap) => $"{gap.Node} ({gap.OpType}): {gap.Reason}";

    private static void Shapes(List<string> lines, ModelInspection m)
    {
        var s = m.Shapes;
        Labelled(lines, "shapes", $"of {s.Declared + s.Inferred + s.Unknown:N0} computed tensors: {s.Declared:N0} stated by the model, " +
                                  $"{s.Inferred:N0} propagated by cellc, {s.Unknown:N0} unknown");
        foreach (var source in m.UnknownShapeSources.Take(ListedGaps))
            lines.AddRange(Wrap(TerminalText.Safe($"{source.Tensors:N0} unknown from {Describe(source.Gap)}"), "    - ", "      ", 3));
        if (m.UnknownShapeSources.Count > ListedGaps)
            lines.Add($"    - ... and {m.UnknownShapeSources.Count - ListedGaps:N0} more places (see --json)");
    }

    /// <summary>
    /// metadata_props one key per line, values wrapped under their column and cut after a few lines
    /// (a genotype's canonical JSON can run to many kilobytes; --json has every value whole).
    /// </summary>
    private static void Metadata(List<string> lines, IReadOnlyDictionary<string, string> metadata)
    {
        if (metadata.Count == 0)
        {
            Labelled(lines, "metadata", "(none)");
            return;
        }
        var keys = metadata.Keys.Take(ListedEntries).Select(TerminalText.Safe).ToList();
        var width = Math.Min(keys.Where(k => k.Length <= KeyColumn).Select(k => k.Length).DefaultIfEmpty(0).Max(), KeyColumn);
        var valueIndent = Indent + new string(' ', width + 2);
        var first = true;
        var index = 0;
        foreach (var value in metadata.Values.Take(ListedEntries))
        {
            var key = keys[index++];
            var label = $"  {(first ? "metadata" : ""),-12}  ";
            first = false;
            var safe = TerminalText.Safe(value);
            if (key.Length > width)
            {
                lines.AddRange(Wrap(key, label, Indent, TextLines));
                lines.AddRange(Wrap(safe, valueIndent, valueIndent, MetadataLines, value.Length));
            }
            else
            {
                lines.AddRange(Wrap(safe.Length > 0 ? safe : "(empty)", label + key.PadRight(width) + "  ", valueIndent, MetadataLines, value.Length));
            }
        }
        More(lines, metadata.Count, "metadata entries");
    }

    /// <summary>
    /// Wraps text to <see cref="Width"/> columns: the first line after <paramref name="lead"/>, the
    /// rest after <paramref name="hang"/>, breaking after a space or comma where one is near the
    /// edge. Beyond <paramref name="maxLines"/> lines the text is cut with a note of its length.
    /// </summary>
    private static IEnumerable<string> Wrap(string text, string lead, string hang, int maxLines, int? originalLength = null)
    {
        var room = Math.Max(Width - hang.Length, 20);
        var firstRoom = Math.Max(Width - lead.Length, 20);
        var result = new List<string>();
        var rest = text.AsSpan();
        while (rest.Length > 0)
        {
            var space = result.Count == 0 ? firstRoom : room;
            if (result.Count == maxLines - 1 && rest.Length > space)
            {
                var cut = $" ... ({originalLength ?? text.Length:N0} chars; see --json)";
                var keep = Math.Max(space - cut.Length, 0);
                result.Add(new StringBuilder().Append(rest[..keep]).Append(cut).ToString());
                break;
            }
            var take = rest.Length <= space ? rest.Length : BreakAt(rest, space);
            result.Add(rest[..take].TrimEnd().ToString());
            rest = rest[take..].TrimStart(' ');
        }
        if (result.Count == 0) result.Add("");
        return result.Select((line, i) => (i == 0 ? lead : hang) + line);
    }

    /// <summary>After the last comma in the final third of the line, else the last space there, else at the edge.</summary>
    private static int BreakAt(ReadOnlySpan<char> text, int space)
    {
        var floor = space * 2 / 3;
        var comma = text[floor..space].LastIndexOf(',');
        if (comma >= 0) return floor + comma + 1;
        var blank = text[floor..space].LastIndexOf(' ');
        return blank >= 0 ? floor + blank + 1 : space;
    }
}
