namespace CellCompiler.Reporting;

/// <summary>
/// The charts, by group: objectives (when the report has any) then cost. Each chart is a figure of
/// class `chart-card` (and `small` for the lesser ones) with `data-front` naming the front it marks
/// and `data-budgets` the budget lines drawn on it.
/// </summary>
public static class ChartsSection
{
    public static void Write(TextWriter w, ReportPage page)
    {
        var objectives = page.Charts.Where(c => c.Group == ChartGroup.Objectives).ToList();
        if (objectives.Count > 0)
        {
            var names = string.Join(", ", page.Summary.Objectives.Select(o => $"<code>{Html.Text(o.Name)}</code> ({o.Direction})"));
            w.WriteLine("<section id=\"objectives\" aria-labelledby=\"objectives-title\">");
            w.WriteLine("<h2 id=\"objectives-title\">Objectives against cost</h2>");
            w.WriteLine($"<p>Each objective ({names}) against each cost: the Pareto front holds the ok candidates that no other " +
                "beats on both the objective and the cost.</p>");
            Grid(w, objectives);
            w.WriteLine("</section>");
        }
        w.WriteLine("<section id=\"charts\" aria-labelledby=\"charts-title\">");
        w.WriteLine("<h2 id=\"charts-title\">Cost</h2>");
        Grid(w, page.Charts.Where(c => c.Group == ChartGroup.Cost).ToList());
        w.WriteLine("</section>");
    }

    private static void Grid(TextWriter w, IReadOnlyList<ReportChart> charts)
    {
        w.WriteLine("<div class=\"chart-grid\">");
        foreach (var chart in charts)
        {
            var front = chart.Front is { Count: > 0 } f ? $" data-front=\"{f.Key}\"" : "";
            var budgets = $" data-budgets=\"{Html.Attribute(string.Join(' ', chart.Budgets))}\"";
            w.WriteLine($"<figure class=\"chart-card{(chart.Small ? " small" : "")}\" aria-labelledby=\"{chart.Id}-title\"{front}{budgets}>");
            w.WriteLine($"<figcaption><strong id=\"{chart.Id}-title\">{Html.Text(chart.Title)}</strong><span>{chart.Caption}</span></figcaption>");
            w.WriteLine(ChartSvg.Export(chart.Model(), chart.Id, chart.Title, chart.Small));
            w.WriteLine("</figure>");
        }
        w.WriteLine("</div>");
    }
}
