using CellCompiler.Screening;

namespace CellCompiler.Cli.Output;

/// <summary>The closing summary of a screening run: counts, frequent reasons, Pareto fronts.</summary>
public static class ScreeningReport
{
    public static void Write(TextWriter output, ScreeningSummary summary, TimeSpan elapsed)
    {
        var counts = string.Join(", ", CheckStatusNames.All.Select(s => $"{s.Name()} {summary.Count(s):N0}"));
        output.WriteLine($"{Wording.Counted(summary.Done, "candidate")}: {counts}");
        output.WriteLine($"Checked in {Formatting.Duration(elapsed)}" +
                         (summary.Cached > 0 ? $"; {summary.Cached:N0} answered from the cache." : "."));
        var reasons = summary.TopReasons(5);
        if (reasons.Count > 0)
        {
            output.WriteLine("Most frequent reasons:");
            foreach (var (reason, count) in reasons)
                output.WriteLine($"  {count,8:N0}  {TerminalText.Safe(reason)}");
        }
        WriteFront(output, "params against MACs", summary.ParamsVsMacs, "MACs", y => Formatting.Scaled(y));
        if (summary.LatencyMeasured)
            WriteFront(output, "params against latency p50", summary.ParamsVsLatency, "p50", y => $"{Wording.Significant(y)} ms");
    }

    private static void WriteFront(TextWriter output, string title, ParetoFront front, string yName, Func<double, string> formatY)
    {
        var points = front.Points;
        if (points.Count == 0) return;
        output.WriteLine($"Pareto front of ok candidates, {title} ({points.Count:N0}):");
        foreach (var p in points.Take(20))
            output.WriteLine($"  {TerminalText.Safe(p.Id),-24} params {Formatting.Scaled(p.X),-9} {yName} {formatY(p.Y)}" +
                             (p.Ties > 0 ? $"  (and {p.Ties:N0} more with equal figures)" : ""));
        if (points.Count > 20) output.WriteLine($"  ... and {points.Count - 20:N0} more");
    }
}
