using CellCompiler.Runtime;
using CellCompiler.Screening;

namespace CellCompiler.Cli.Output;

/// <summary>The human view of `check`: one row per candidate as it finishes.</summary>
public sealed class CheckTable(TextWriter output, bool withLatency)
{
    public void WriteHeader()
    {
        var latency = withLatency ? $" {"p50 ms",9}" : "";
        output.WriteLine($"{"id",-20} {"status",-11} {"params",10} {"MACs",10} {"act. MB",8} {"train GB",9}{latency}  reason");
    }

    public void WriteRow(CheckRecord r)
    {
        var f = r.Figures;
        var latency = withLatency ? $" {(r.Latency?.AtBatch(1) is { } one ? one.P50Ms.ToString("0.000") : "-"),9}" : "";
        output.WriteLine(
            $"{Fit(r.Id, 20),-20} {r.Status.Name(),-11} {(f is null ? "-" : Formatting.Scaled(f.Params)),10} " +
            $"{(f is null ? "-" : Formatting.Scaled(f.Macs)),10} {(f is null ? "-" : (f.PeakActivationBytes / 1e6).ToString("0.00")),8} " +
            $"{(r.TrainMemoryBytes is { } t ? (t / 1e9).ToString("0.000") : "-"),9}{latency}  {r.Reason ?? ""}");
    }

    /// <summary>The cautions that go with the figures.</summary>
    public static void WriteCautions(TextWriter output, LatencyReport? anyLatency)
    {
        output.WriteLine("Memory figures are estimates (float32; training: activations kept at --train-batch plus 4 copies of every parameter).");
        if (anyLatency is { } l)
            output.WriteLine($"Latency: CPU, {l.Processor}, ONNX Runtime {l.RuntimeVersion}, {l.Threads} thread(s). It does not transfer to other hardware.");
    }

    private static string Fit(string text, int width) => text.Length <= width ? text : text[..(width - 1)] + "~";
}
