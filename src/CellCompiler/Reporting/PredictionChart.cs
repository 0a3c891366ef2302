using System.Globalization;
using OxyPlot;
using OxyPlot.Series;

namespace CellCompiler.Reporting;

/// <summary>
/// Predicted against measured latency (issue 12): a scatter of `latency_predicted_ms` against the
/// measured p50 at batch 1 on one scale, with the identity line (the prediction is exact) and the
/// band of +-10% around it, the accuracy the README reports for the table predictor. Shown only when
/// some record carries both figures. The caption gives the share inside the band and the caution
/// that a prediction holds only where its table was calibrated.
/// </summary>
public static class PredictionChart
{
    public const string Id = "chart-latency-predicted";

    /// <summary>The band's half-width, as a fraction of the measured latency.</summary>
    public const double Band = 0.10;

    public static ReportChart? For(ResultsSummary s, int pointLimit)
    {
        if (s.WithPrediction == 0) return null;
        var both = s.Points.Where(p => p.HasLatency && !double.IsNaN(p.PredictedMs)).ToList();
        var inside = both.Count(p => Math.Abs(p.PredictedMs - p.LatencyMs) <= Band * p.LatencyMs);
        var share = (100.0 * inside / both.Count).ToString("0", CultureInfo.InvariantCulture);
        var budgets = ReportCharts.BudgetOptions(s, Measure.Latency, Measure.PredictedLatency);
        var caption = $"{Html.Whole(s.WithPrediction)} candidates with both; on the dashed diagonal the prediction is exact, " +
                      $"between the dotted lines it is within ±10% of the measurement ({share}% of them). " +
                      "A prediction holds only for the machine, ONNX Runtime version, threads and settings its table was calibrated under; " +
                      "a measurement under background load reads slower than the prediction." + ChartPlan.BudgetCaption(budgets);
        return new ReportChart(Id, "Predicted against measured latency p50", caption, ChartGroup.Cost, false, null, budgets,
            () => Model(s, pointLimit));
    }

    private static PlotModel Model(ResultsSummary s, int pointLimit)
    {
        var model = ReportCharts.Scatter(s, Measure.Latency, Measure.PredictedLatency, null, pointLimit, diagonal: true);
        var values = s.Points.Where(p => p.HasLatency && !double.IsNaN(p.PredictedMs)).SelectMany(p => new[] { p.LatencyMs, p.PredictedMs }).ToList();
        if (values.Count == 0) return model;
        var (low, high) = (values.Min(), values.Max());
        foreach (var (factor, title) in new[] { (1 + Band, "±10%"), (1 - Band, (string?)null) })
            model.Series.Add(new LineSeries
            {
                Title = title, // the band is named once in the legend
                RenderInLegend = title is not null,
                Color = ChartSvg.Color(Ink.Axis),
                StrokeThickness = 1,
                LineStyle = LineStyle.Dot,
                Points = { new DataPoint(low, low * factor), new DataPoint(high, high * factor) },
            });
        return model;
    }
}
