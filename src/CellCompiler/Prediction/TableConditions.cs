using CellCompiler.Runtime;

namespace CellCompiler.Prediction;

/// <summary>
/// What a latency table's figures depend on. A prediction holds only under the conditions the table
/// was calibrated under, so a table is refused under any other: another processor model, ONNX
/// Runtime version, thread count, session settings or opset (the opset decides some ops, e.g.
/// HardSwish). All figures are for batch 1.
/// </summary>
public sealed record TableConditions(string Processor, string OnnxRuntime, int Threads, string Session, int Opset)
{
    /// <summary>This machine, with the session settings `bench` and `check --latency` use.</summary>
    public static TableConditions Here(int threads, int opset) =>
        new(MachineInfo.Processor, MachineInfo.RuntimeVersion, threads, LatencyMeter.DescribeSession(threads), opset);

    /// <summary>Every condition that differs, as "what: the table's value, here: ours".</summary>
    public IReadOnlyList<(string Field, string Problem)> Differences(TableConditions here)
    {
        var differences = new List<(string, string)>();
        void Compare(string field, string what, string table, string now)
        {
            if (table != now) differences.Add((field, $"it was calibrated with {what} '{table}', but this run has '{now}'"));
        }
        Compare("processor", "processor", Processor, here.Processor);
        Compare("onnxruntime", "ONNX Runtime", OnnxRuntime, here.OnnxRuntime);
        Compare("threads", "threads", Threads.ToString(System.Globalization.CultureInfo.InvariantCulture), here.Threads.ToString(System.Globalization.CultureInfo.InvariantCulture));
        Compare("session", "session settings", Session, here.Session);
        Compare("opset", "opset", Opset.ToString(System.Globalization.CultureInfo.InvariantCulture), here.Opset.ToString(System.Globalization.CultureInfo.InvariantCulture));
        return differences;
    }
}
