using CellCompiler.Screening;

namespace CellCompiler.Reporting;

/// <summary>The figures of one candidate that the charts and fronts need (kept for every candidate; NaN where absent).</summary>
public readonly record struct ChartPoint(double Params, double Macs, double LatencyMs, CheckStatus Status,
    double PredictedMs = double.NaN, bool Trivial = false, double[]? Objectives = null)
{
    public bool HasLatency => !double.IsNaN(LatencyMs);
}

/// <summary>
/// A figure that a chart axis or a Pareto front uses: params, MACs, latency p50, predicted latency,
/// or an objective. It knows its value on a candidate, how ticks and listings show it, whether more
/// is better, and the budget (and the `check` option that set it) that caps it, if any.
/// </summary>
public sealed record Measure(string Key, string Label, Func<ChartPoint, double> Of, Func<double, string> Tick,
    Func<double, string> Show, bool Maximise = false, Func<Budgets, double?>? Budget = null, string? BudgetOption = null)
{
    public static readonly Measure Params = new("params", "params", p => p.Params, Html.Scaled, v => Html.Whole((long)v),
        Budget: b => b.MaxParams, BudgetOption: "--max-params");

    public static readonly Measure Macs = new("macs", "MACs", p => p.Macs, Html.Scaled, Html.Scaled,
        Budget: b => b.MaxMacs, BudgetOption: "--max-macs");

    public static readonly Measure Latency = new("latency", "latency p50 at batch 1 (ms)", p => p.LatencyMs, Html.MillisecondTick, Html.Milliseconds,
        Budget: b => b.MaxLatencyMs, BudgetOption: "--max-latency-ms");

    public static readonly Measure PredictedLatency = new("latency-predicted", "predicted latency p50 at batch 1 (ms)", p => p.PredictedMs,
        Html.MillisecondTick, Html.Milliseconds, Budget: b => b.MaxLatencyMs, BudgetOption: "--max-latency-ms");

    /// <summary>The i-th objective of the report.</summary>
    public static Measure For(Objective objective, int index) =>
        new($"objective-{index}", objective.Describe(), p => p.Objectives is { } values ? values[index] : double.NaN,
            Html.Significant, Html.Significant, objective.Maximise);

    public double? BudgetIn(Budgets? budgets) => budgets is null || Budget is null ? null : Budget(budgets);
}
