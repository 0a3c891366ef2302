using CellCompiler.Runtime;
using CellCompiler.Screening;

namespace CellCompiler.Cli.Output;

/// <summary>The human view of `check`: one row per candidate as it finishes; file-borne text is made safe to print.</summary>
public sealed class CheckTable(TextWriter output, bool withLatency)
{
    public void WriteHeader()
    {
        var latency = withLatency ? $" {"p50 ms",9}" : "";
        output.WriteLine($"{"id",-20} {"status",-11} {"params",10} {"MACs",10} {"act. MB",8} {"train GB",9}{latency}  reason");
    }

    public void WriteRow(CheckRecord r)
    {
        var latency = withLatency ? $" {(r.LatencyMs is { } ms ? Wording.Significant(ms) : "-"),9}" : "";
        output.WriteLine(
            $"{Fit(TerminalText.Safe(r.Id), 20),-20} {r.Status.Name(),-11} {(r.Params is { } p ? Formatting.Scaled(p) : "-"),10} " +
            $"{(r.Macs is { } m ? Formatting.Scaled(m) : "-"),10} {(r.PeakActivationBytes is { } a ? Wording.Significant(a / 1e6) : "-"),8} " +
            $"{(r.TrainMemoryBytes is { } t ? Wording.Significant(t / 1e9) : "-"),9}{latency}  {TerminalText.Safe(r.Reason)}");
    }

    /// <summary>The cautions that go with the figures.</summary>
    public static void WriteCautions(TextWriter output, LatencyReport? anyLatency)
    {
        output.WriteLine("Memory figures are estimates (float32; training: activations kept at --train-batch plus 4 copies of every parameter).");
        if (anyLatency is { } l)
            output.WriteLine($"Latency: CPU, {TerminalText.Safe(l.Processor)}, ONNX Runtime {l.RuntimeVersion}, {Wording.Counted(l.Threads, "thread")}. It does not transfer to other hardware.");
    }

    private static string Fit(string text, int width) => text.Length <= width ? text : text[..(width - 1)] + "~";
}
