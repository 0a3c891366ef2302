using OxyPlot;

namespace CellCompiler.Reporting;

/// <summary>Where a chart sits on the page.</summary>
public enum ChartGroup { Objectives, Cost }

/// <summary>
/// One chart of the page: its element id, title and caption, whether it is drawn small, the front it
/// marks (listed and drawn in the fronts section), the budget options drawn on it as lines, and its model.
/// </summary>
public sealed record ReportChart(string Id, string Title, string Caption, ChartGroup Group, bool Small, FrontSpec? Front,
    IReadOnlyList<string> Budgets, Func<PlotModel> Model);

/// <summary>
/// Which charts a report shows, in order. Objectives first (each against params, MACs and, when
/// measured, latency), then cost, led by the charts that separate candidates: latency against MACs
/// and params against latency, and predicted against measured latency when records carry a
/// prediction. Params against MACs follows, drawn small when latency charts lead (with a fixed
/// skeleton it is close to a straight line), then the histograms of params and MACs.
/// </summary>
public static class ChartPlan
{
    public static IReadOnlyList<ReportChart> For(ResultsSummary s, int pointLimit)
    {
        var charts = new List<ReportChart>();
        var latency = s.WithLatency > 0;
        for (var i = 0; i < s.Objectives.Count; i++)
        {
            var objective = s.Objectives[i];
            var measure = s.ObjectiveMeasures[i];
            var costs = latency ? new[] { Measure.Params, Measure.Macs, Measure.Latency } : [Measure.Params, Measure.Macs];
            foreach (var cost in costs)
                charts.Add(Scatter(s, $"chart-{measure.Key}-{cost.Key}", $"{objective.Name} ({objective.Direction}) against {Short(cost)}",
                    ChartGroup.Objectives, small: false, cost, measure, s.Front(cost, measure), pointLimit));
        }
        if (latency)
        {
            charts.Add(Scatter(s, "chart-latency-macs", "Latency p50 against MACs", ChartGroup.Cost, small: false,
                Measure.Macs, Measure.Latency, s.MacsVsLatency, pointLimit));
            charts.Add(Scatter(s, "chart-params-latency", "Latency p50 against params", ChartGroup.Cost, small: false,
                Measure.Params, Measure.Latency, s.ParamsVsLatency, pointLimit));
        }
        if (s.WithPrediction > 0)
        {
            var budgets = ReportCharts.BudgetOptions(s, Measure.Latency);
            charts.Add(new ReportChart("chart-latency-predicted", "Predicted against measured latency p50", 
                $"{Html.Whole(s.WithPrediction)} candidates with both; on the dashed diagonal the prediction is exact. " +
                "Predictions hold only where the predictor was calibrated." + BudgetCaption(budgets),
                ChartGroup.Cost, false, null, budgets,
                () => ReportCharts.Scatter(s, Measure.Latency, Measure.PredictedLatency, null, pointLimit, diagonal: true)));
        }
        charts.Add(Scatter(s, "chart-params-macs", "MACs against params", ChartGroup.Cost, small: latency,
            Measure.Params, Measure.Macs, s.ParamsVsMacs, pointLimit));
        charts.Add(Histogram(s, "chart-params-hist", "Params", Measure.Params));
        charts.Add(Histogram(s, "chart-macs-hist", "MACs", Measure.Macs));
        return charts;
    }

    private static string Short(Measure m) => m == Measure.Latency ? "latency p50" : m.Label;

    private static ReportChart Scatter(ResultsSummary s, string id, string title, ChartGroup group, bool small,
        Measure x, Measure y, FrontSpec front, int pointLimit)
    {
        var count = s.Points.Count(p => !double.IsNaN(x.Of(p)) && !double.IsNaN(y.Of(p)));
        var members = front.Count;
        var frontText = members == 0
            ? "no ok candidate has both figures, so no Pareto front"
            : $"the diamonds are the Pareto front of the ok ones ({Html.Whole(members)}), listed below";
        var budgets = ReportCharts.BudgetOptions(s, x, y);
        return new ReportChart(id, title, $"{Html.Whole(count)} candidates with both figures; {frontText}." + BudgetCaption(budgets),
            group, small, front, budgets, () => ReportCharts.Scatter(s, x, y, front, pointLimit));
    }

    private static ReportChart Histogram(ResultsSummary s, string id, string title, Measure measure)
    {
        var budgets = ReportCharts.BudgetOptions(s, measure);
        return new ReportChart(id, title, "How many candidates fall in each range, by status." + BudgetCaption(budgets),
            ChartGroup.Cost, false, null, budgets, () => ReportCharts.Histogram(s, measure));
    }

    private static string BudgetCaption(IReadOnlyList<string> budgets) => budgets.Count == 0
        ? ""
        : $" Dashed: the run's {string.Join(" and ", budgets.Select(b => $"<code>{Html.Text(b)}</code>"))}.";
}
