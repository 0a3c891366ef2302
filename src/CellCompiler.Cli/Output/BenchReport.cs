using System.Globalization;
using System.Text.Json;
using CellCompiler.Cli.Commands;
using CellCompiler.Runtime;
using CellCompiler.Screening;

namespace CellCompiler.Cli.Output;

/// <summary>Prints a latency measurement as a table or one JSON object.</summary>
public static class BenchReport
{
    private static string Ms(double value) => value.ToString("0.000", CultureInfo.InvariantCulture);

    public static void WriteText(TextWriter output, BenchResult result)
    {
        var l = result.Latency;
        output.WriteLine($"{TerminalText.Safe(result.Path)}: {TerminalText.Safe(result.Description)}");
        output.WriteLine($"CPU: {TerminalText.Safe(l.Processor)}; ONNX Runtime {l.RuntimeVersion}; {Wording.Counted(l.Threads, "intra-op thread")}");
        output.WriteLine();
        output.WriteLine($"{"batch",6} {"runs",6} {"min ms",10} {"p50 ms",10} {"p90 ms",10} {"mean ms",10} {"std ms",9} {"samples/s",11}  output");
        foreach (var b in l.Batches)
            output.WriteLine($"{b.Batch,6} {b.Runs,6} {Ms(b.MinMs),10} {Ms(b.P50Ms),10} {Ms(b.P90Ms),10} {Ms(b.MeanMs),10} {Ms(b.StdMs),9} " +
                             $"{b.SamplesPerSecond.ToString("0.0", CultureInfo.InvariantCulture),11}  [{string.Join(", ", b.OutputShape)}]");
        if (result.Breakdown is { } breakdown)
        {
            output.WriteLine();
            output.WriteLine($"Kernel time by {(breakdown.ByOpType ? "op type" : "part")} at batch {l.Batches[0].Batch} ({Ms(breakdown.MicrosecondsPerRun / 1000)} ms of kernel time per profiled run, profiler on):");
            foreach (var part in breakdown.Parts)
                output.WriteLine($"  {TerminalText.Safe(part.Part),-24} {Ms(part.Microseconds / 1000 / Math.Max(1, breakdown.Runs)),10} ms/run {part.Percent,6:0.0}%");
            if (breakdown.TopMotifs.Count > 0)
            {
                output.WriteLine("Top motifs (time of every node under the motif, all uses):");
                foreach (var motif in breakdown.TopMotifs)
                    output.WriteLine($"  {TerminalText.Safe(motif.Part),-24} {motif.Percent,6:0.0}%");
            }
        }
        var noisy = l.Batches.Where(b => b.Noisy).ToList();
        if (noisy.Count > 0)
        {
            output.WriteLine();
            foreach (var b in noisy)
                output.WriteLine($"Noisy measurement at batch {b.Batch}: p90 is {Wording.Significant(b.P90Ms / b.P50Ms)} x p50 " +
                                 $"(above {LatencyStats.NoisyRatio} x), so p50 may mislead.");
            output.WriteLine("Measure longer (e.g. --min-seconds 5) or with fewer background jobs on this machine.");
        }
        output.WriteLine();
        output.WriteLine("CPU latency measured here does not transfer to other hardware, thread counts or runtime versions.");
    }

    public static void WriteJson(Stream stream, BenchResult result)
    {
        using (var writer = JsonOutput.Writer(stream))
        {
            writer.WriteStartObject();
            writer.WriteString("model", result.Path);
            writer.WriteString("description", result.Description);
            writer.WritePropertyName("latency");
            System.Text.Json.JsonSerializer.Serialize(writer, result.Latency.Rounded(), ScreeningJson.Readable.LatencyReport);
            writer.WriteStartArray("noisy_batches");
            foreach (var b in result.Latency.Batches.Where(b => b.Noisy)) writer.WriteNumberValue(b.Batch);
            writer.WriteEndArray();
            writer.WriteStartArray("output_shapes");
            foreach (var b in result.Latency.Batches)
            {
                writer.WriteStartArray();
                foreach (var d in b.OutputShape) writer.WriteNumberValue(d);
                writer.WriteEndArray();
            }
            writer.WriteEndArray();
            if (result.Breakdown is { } breakdown)
            {
                writer.WriteStartObject("breakdown");
                writer.WriteString("by", breakdown.ByOpType ? "op_type" : "part");
                writer.WriteNumber("kernel_ms_per_run", Math.Round(breakdown.MicrosecondsPerRun / 1000, 4));
                WriteShares(writer, "parts", breakdown.Parts);
                WriteShares(writer, "top_motifs", breakdown.TopMotifs);
                writer.WriteEndObject();
            }
            writer.WriteEndObject();
        }
        stream.WriteByte((byte)'\n');
    }

    private static void WriteShares(Utf8JsonWriter writer, string name, IReadOnlyList<CellCompiler.Runtime.TimeShare> shares)
    {
        writer.WriteStartArray(name);
        foreach (var s in shares)
        {
            writer.WriteStartObject();
            writer.WriteString("name", s.Part);
            writer.WriteNumber("percent", Math.Round(s.Percent, 3));
            writer.WriteEndObject();
        }
        writer.WriteEndArray();
    }
}
