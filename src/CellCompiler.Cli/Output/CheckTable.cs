using CellCompiler.Runtime;
using CellCompiler.Screening;

namespace CellCompiler.Cli.Output;

/// <summary>The human view of `check`: one row per candidate as it finishes, then counts by status.</summary>
public sealed class CheckTable(TextWriter output, bool withLatency)
{
    private readonly Dictionary<CheckStatus, int> _counts = new();
    private LatencyReport? _anyLatency;

    public void WriteHeader()
    {
        var latency = withLatency ? $" {"p50 ms",9}" : "";
        output.WriteLine($"{"id",-20} {"status",-11} {"params",10} {"MACs",10} {"act. MB",8} {"train GB",9}{latency}  reason");
    }

    public void WriteRow(CheckRecord r)
    {
        _counts[r.Status] = _counts.GetValueOrDefault(r.Status) + 1;
        _anyLatency ??= r.Latency;
        var f = r.Figures;
        var latency = withLatency ? $" {(r.Latency?.AtBatch(1) is { } one ? one.P50Ms.ToString("0.000") : "-"),9}" : "";
        output.WriteLine(
            $"{Fit(r.Id, 20),-20} {r.Status.Name(),-11} {(f is null ? "-" : Formatting.Scaled(f.Params)),10} " +
            $"{(f is null ? "-" : Formatting.Scaled(f.Macs)),10} {(f is null ? "-" : (f.PeakActivationBytes / 1e6).ToString("0.00")),8} " +
            $"{(r.TrainMemoryBytes is { } t ? (t / 1e9).ToString("0.000") : "-"),9}{latency}  {r.Reason ?? ""}");
    }

    public void WriteSummary()
    {
        var total = _counts.Values.Sum();
        var parts = Enum.GetValues<CheckStatus>().Select(s => $"{s.Name()} {_counts.GetValueOrDefault(s)}");
        output.WriteLine();
        output.WriteLine($"{total} candidate(s): {string.Join(", ", parts)}");
        output.WriteLine("Memory figures are estimates (float32; training: activations kept at --train-batch plus 4 copies of every parameter).");
        if (_anyLatency is { } l)
            output.WriteLine($"Latency: CPU, {l.Processor}, ONNX Runtime {l.RuntimeVersion}, {l.Threads} thread(s). It does not transfer to other hardware.");
    }

    private static string Fit(string text, int width) => text.Length <= width ? text : text[..(width - 1)] + "~";
}
