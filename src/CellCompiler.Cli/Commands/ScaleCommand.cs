using System.CommandLine;
using System.Globalization;
using System.Text.Json;
using CellCompiler.Cli.Options;
using CellCompiler.Cli.Output;
using CellCompiler.Input;
using CellCompiler.Scaling;

namespace CellCompiler.Cli.Commands;

/// <summary>`cellc scale`: what a found cell costs at other sizes, side by side, with ratios to the first.</summary>
public static class ScaleCommand
{
    public static Command Create()
    {
        var genotype = new Argument<string>("GENOTYPE") { Description = "Genotype file (JSON, format genotype/1)." };
        var to = new Option<string>("--to")
        {
            HelpName = "A,B,...",
            Description = "Target skeletons, presets (proxy, full, full224) or skeleton files, comma-separated.",
            DefaultValueFactory = _ => "proxy,full,full224",
        };
        var widths = new Option<string?>("--width-mult") { HelpName = "a,b,...", Description = "Width multipliers, one row each per target, e.g. 0.5,1,2." };
        var cells = new Option<string?>("--cells") { HelpName = "a,b,...", Description = "Cells per stage, one row each per target, e.g. 1,2,4 (each value applies to every stage)." };
        var input = new Option<string?>("--input") { HelpName = "CxHxW", Description = "Input size for every target." };
        var classes = new Option<int?>("--classes") { HelpName = "K", Description = "Number of classes for every target." };
        var channels = new Option<string?>("--channels") { HelpName = "a,b,c", Description = "Channels per stage for every target." };
        var merge = new Option<string?>("--merge") { HelpName = "concat|sum", Description = "Merge for every target." };
        var reduction = new Option<string?>("--reduction") { HelpName = "OP", Description = "Reduction for every target: sepconv3x3 or conv3x3." };
        var latency = new Option<bool>("--latency") { Description = "Also measure CPU latency p50 at batch 1 (ONNX Runtime, 1 thread)." };
        var outDir = new Option<string?>("--output", "-o") { HelpName = "DIR", Description = "Write each model to DIR, named after the genotype and its target." };
        var trainBatch = new Option<int>("--train-batch") { HelpName = "B", Description = "Batch size of the training memory estimate.", DefaultValueFactory = _ => 64 };
        var json = new Option<bool>("--json") { Description = "Print one JSON object instead of the table." };
        var settings = new CompileSettingsOptions();
        var latencyOptions = new LatencyOptions();

        var command = new Command("scale",
            "Compile a cell at several sizes and show params, MACs, peak activation memory, the training memory estimate, " +
            "ONNX size and (with --latency) CPU latency, each also as a ratio to the first row.");
        command.Arguments.Add(genotype);
        foreach (var option in new Option[] { to, widths, cells, input, classes, channels, merge, reduction, latency, outDir, trainBatch, json })
            command.Options.Add(option);
        settings.AddTo(command);
        latencyOptions.AddTo(command);

        command.SetAction(parse =>
        {
            var path = parse.GetValue(genotype)!;
            var parsed = GenotypeReader.ReadFile(path);
            var bases = parse.GetValue(to)!.Split(',', StringSplitOptions.TrimEntries | StringSplitOptions.RemoveEmptyEntries)
                .Select(t => (Label: SkeletonPresets.All.ContainsKey(t) ? t : Path.GetFileNameWithoutExtension(t), Skeleton: SkeletonReader.Resolve(t)))
                .ToList();
            if (bases.Count == 0) throw SkeletonOptions.Bad("--to", "needs at least one preset or skeleton file");
            var mergeText = parse.GetValue(merge);
            var common = new SkeletonOverrides(
                Input: SkeletonOptions.ParseInput(parse.GetValue(input)),
                Classes: parse.GetValue(classes),
                Channels: SkeletonOptions.ParseList(parse.GetValue(channels), "--channels"),
                Merge: mergeText is null ? null : SkeletonReader.ParseMerge(mergeText) ?? throw SkeletonOptions.Bad("--merge", $"'{mergeText}' is not concat or sum"),
                Reduction: parse.GetValue(reduction));
            var widthList = ParseDoubles(parse.GetValue(widths), "--width-mult");
            var cellList = SkeletonOptions.ParseList(parse.GetValue(cells), "--cells") ?? [];
            // Two skeleton files of the same name would give two targets of one label (and one file name).
            bases = bases.Select((b, i) => bases.Count(o => o.Label == b.Label) > 1 ? (Label: $"{b.Label}#{i + 1}", b.Skeleton) : b).ToList();
            var targets = CellScaler.Targets(bases, widthList, cellList, common);
            if (targets.Count > 64) throw SkeletonOptions.Bad("--to", $"{targets.Count} targets; at most 64 per run");
            var batch = parse.GetValue(trainBatch);
            if (batch is < 1 or > 1_000_000) throw SkeletonOptions.Bad("--train-batch", "must be between 1 and 1000000");
            var measure = parse.GetValue(latency) ? latencyOptions.Resolve(parse) : null;
            if (measure is not null && !measure.BatchSizes.SequenceEqual([1]))
                throw SkeletonOptions.Bad("--batch", "scale measures latency at batch 1 only; use `cellc bench` for other batch sizes");

            var folder = parse.GetValue(outDir);
            if (folder is not null)
            {
                if (File.Exists(folder)) throw new OutputException($"{folder}: is a file, not a folder");
                try { Directory.CreateDirectory(folder); }
                catch (Exception e) when (e is IOException or UnauthorizedAccessException)
                {
                    throw new OutputException($"{folder}: cannot create the folder: {e.Message}");
                }
            }
            var written = new List<string>();
            var stem = Path.GetFileNameWithoutExtension(path);
            IReadOnlyList<ScaleRow> rows;
            try
            {
                rows = CellScaler.Run(parsed, targets, settings.Resolve(parse), batch, measure, folder is null ? null : (target, model) =>
                {
                    var file = Path.Combine(folder, $"{stem}.{FileLabel(target.Label)}.onnx");
                    AtomicFile.Write(file, model.OnnxBytes);
                    written.Add(file);
                });
            }
            catch (Graph.CompileException e) { throw new InputException(path, "", e.Message); }
            catch (Lowering.DeadCellException e) { throw e.In(path); }

            if (parse.GetValue(json))
            {
                using var stdout = Console.OpenStandardOutput();
                WriteJson(stdout, parsed, rows, written);
            }
            else
            {
                WriteTable(Console.Out, parsed, rows, written, batch);
            }
            return ExitCodes.Ok;
        });
        return command;
    }

    private static IReadOnlyList<double> ParseDoubles(string? text, string option)
    {
        if (text is null) return [];
        var values = new List<double>();
        foreach (var part in text.Split(','))
        {
            if (!double.TryParse(part.Trim(), NumberStyles.Float, CultureInfo.InvariantCulture, out var value) || !double.IsFinite(value) || value <= 0)
                throw SkeletonOptions.Bad(option, $"'{text}' is not a list of positive numbers");
            values.Add(value);
        }
        return values;
    }

    /// <summary>"full w0.5 c2" becomes "full-w0.5-c2": a file name that says its target.</summary>
    private static string FileLabel(string label) =>
        string.Concat(label.Select(c => char.IsLetterOrDigit(c) || c is '.' or '_' or '-' ? c : '-'));

    private static double Ratio(double value, double first) => first == 0 ? double.NaN : value / first;

    private static void WriteTable(TextWriter output, Genotype genotype, IReadOnlyList<ScaleRow> rows, List<string> written, int trainBatch)
    {
        var first = rows[0];
        var withLatency = rows.Any(r => r.Latency is not null);
        output.WriteLine($"{genotype.Name}: {Wording.Counted(rows.Count, "target")}; ratios to '{first.Target.Label}' in brackets");
        output.WriteLine();
        var header = $"{"target",-18} {"params",-18} {"MACs",-18} {"peak act.",-20} {$"train mem. (B={trainBatch})",-22} {"ONNX size",-20}";
        if (withLatency) header += $" {"p50 ms",-16}";
        output.WriteLine(header);
        foreach (var r in rows)
        {
            string Cell(string value, double ratio, int width) => $"{value} [{ratio:0.##}x]".PadRight(width);
            var line = $"{r.Target.Label,-18} {Cell(Formatting.Scaled(r.Params), Ratio(r.Params, first.Params), 18)} " +
                       $"{Cell(Formatting.Scaled(r.Macs), Ratio(r.Macs, first.Macs), 18)} " +
                       $"{Cell(Formatting.Bytes(r.PeakActivationBytes), Ratio(r.PeakActivationBytes, first.PeakActivationBytes), 20)} " +
                       $"{Cell(Formatting.Bytes(r.TrainMemoryBytes), Ratio(r.TrainMemoryBytes, first.TrainMemoryBytes), 22)} " +
                       $"{Cell(Formatting.Bytes(r.OnnxBytes), Ratio(r.OnnxBytes, first.OnnxBytes), 20)}";
            if (withLatency && r.Latency is { } l && first.Latency is { } fl)
                line += $" {Cell(l.P50Ms.ToString("0.000", CultureInfo.InvariantCulture), Ratio(l.P50Ms, fl.P50Ms), 16)}";
            output.WriteLine(line.TrimEnd());
        }
        output.WriteLine();
        foreach (var r in rows)
            output.WriteLine($"  {r.Target.Label}: {CompileReport.DescribeSkeleton(r.Target.Skeleton)}");
        foreach (var file in written)
            output.WriteLine($"wrote {file}");
        output.WriteLine("Memory figures are estimates (float32). CPU latency does not transfer to other hardware.");
    }

    private static void WriteJson(Stream stream, Genotype genotype, IReadOnlyList<ScaleRow> rows, List<string> written)
    {
        var first = rows[0];
        using (var writer = JsonOutput.Writer(stream))
        {
            writer.WriteStartObject();
            writer.WriteString("name", genotype.Name);
            writer.WriteStartArray("rows");
            foreach (var r in rows)
            {
                writer.WriteStartObject();
                writer.WriteString("target", r.Target.Label);
                writer.WritePropertyName("skeleton");
                r.Target.Skeleton.WriteJson(writer);
                writer.WriteNumber("params", r.Params);
                writer.WriteNumber("macs", r.Macs);
                writer.WriteNumber("peak_activation_bytes", r.PeakActivationBytes);
                writer.WriteNumber("train_memory_bytes", r.TrainMemoryBytes);
                writer.WriteNumber("onnx_bytes", r.OnnxBytes);
                if (r.Latency is { } l) writer.WriteNumber("latency_ms", Math.Round(l.P50Ms, 4));
                writer.WriteStartObject("ratios");
                writer.WriteNumber("params", Math.Round(Ratio(r.Params, first.Params), 4));
                writer.WriteNumber("macs", Math.Round(Ratio(r.Macs, first.Macs), 4));
                writer.WriteNumber("peak_activation_bytes", Math.Round(Ratio(r.PeakActivationBytes, first.PeakActivationBytes), 4));
                writer.WriteNumber("train_memory_bytes", Math.Round(Ratio(r.TrainMemoryBytes, first.TrainMemoryBytes), 4));
                writer.WriteNumber("onnx_bytes", Math.Round(Ratio(r.OnnxBytes, first.OnnxBytes), 4));
                if (r.Latency is { } lat && first.Latency is { } fl) writer.WriteNumber("latency_ms", Math.Round(Ratio(lat.P50Ms, fl.P50Ms), 4));
                writer.WriteEndObject();
                writer.WriteEndObject();
            }
            writer.WriteEndArray();
            writer.WriteStartArray("written");
            foreach (var file in written) writer.WriteStringValue(file);
            writer.WriteEndArray();
            writer.WriteEndObject();
        }
        stream.WriteByte((byte)'\n');
    }
}
