using System.Globalization;
using CellCompiler.Screening;

namespace CellCompiler.Reporting;

/// <summary>The page's first section: counts by status, the key facts, the top reason kinds, and notes.</summary>
public static class OutcomeSection
{
    private static readonly CultureInfo Invariant = CultureInfo.InvariantCulture;

    public static void Write(TextWriter w, ReportPage page)
    {
        var s = page.Summary;
        w.WriteLine("<section id=\"outcome\" aria-labelledby=\"outcome-title\">");
        w.WriteLine("<h2 id=\"outcome-title\">Outcome</h2>");
        w.WriteLine("<div class=\"tiles\" id=\"status-counts\">");
        foreach (var status in CheckStatusNames.All)
        {
            var count = s.Count(status);
            w.WriteLine($"<div class=\"tile status-count s-{status.Name()}\" data-status=\"{status.Name()}\" data-count=\"{count}\">" +
                $"<span class=\"tile-n\">{Html.Whole(count)}</span><span class=\"tile-share\">{Html.Percent(count, s.Total)}</span>" +
                $"<span class=\"tile-label\">{status.Name()}</span></div>");
        }
        w.WriteLine("</div>");
        w.Write("<div class=\"meter\" role=\"img\" aria-label=\"Share of records by status\">");
        foreach (var status in CheckStatusNames.All)
        {
            var count = s.Count(status);
            if (count == 0) continue;
            var width = (100.0 * count / s.Total).ToString("0.###", Invariant);
            w.Write($"<span class=\"s-{status.Name()}\" style=\"width:{width}%\" title=\"{status.Name()}: {Html.Whole(count)}\"></span>");
        }
        w.WriteLine("</div>");

        w.WriteLine("<ul class=\"facts\">");
        w.WriteLine($"<li><b>{Html.Whole(s.Total)}</b> {Wording.Noun(s.Total, "record")}</li>");
        w.WriteLine($"<li><b>{Html.Whole(s.Points.Count)}</b> with params and MACs</li>");
        w.WriteLine($"<li><b>{Html.Whole(s.WithLatency)}</b> with latency measured</li>");
        w.WriteLine($"<li><b>{Html.Whole(page.Fronts.SelectMany(f => f.Members).Select(m => m.Id).Distinct(StringComparer.Ordinal).Count())}</b> " +
            $"on {Html.Whole(page.Fronts.Count)} Pareto {Wording.Noun(page.Fronts.Count, "front")}</li>");
        if (page.Scores is not null) w.WriteLine($"<li><b>{Html.Whole(s.Total - s.UnscoredTotal)}</b> with scores</li>");
        if (s.Cached > 0) w.WriteLine($"<li><b>{Html.Whole(s.Cached)}</b> from the check cache</li>");
        w.WriteLine("</ul>");
        w.WriteLine($"<p class=\"budgets\" id=\"budgets\">{Budgets(s)}</p>");

        var reasons = s.TopReasons(page.Options.TopReasons);
        w.WriteLine("<h3>Top reasons</h3>");
        if (reasons.Count == 0)
        {
            w.WriteLine("<p class=\"empty\" id=\"top-reasons\">Every candidate is ok: there is no reason to list.</p>");
        }
        else
        {
            var most = reasons[0].Count;
            w.WriteLine("<ol class=\"reasons\" id=\"top-reasons\">");
            foreach (var (kind, count, status) in reasons)
            {
                var width = (100.0 * count / most).ToString("0.###", Invariant);
                w.WriteLine($"<li class=\"s-{status.Name()}\"><span class=\"kind\">{Html.Text(kind)}</span>" +
                    $"<span class=\"track\"><span style=\"width:{width}%\"></span></span><span class=\"n\">{Html.Whole(count)}</span></li>");
            }
            w.WriteLine("</ol>");
            if (s.ReasonKindCount > reasons.Count)
                w.WriteLine($"<p class=\"muted\">and {s.ReasonKindCount - reasons.Count:N0} more kinds of reason; the table lists every record's reason.</p>");
        }

        var notes = Notes(page);
        if (notes.Count > 0)
        {
            w.WriteLine("<div class=\"notes\" id=\"notes\"><strong>Notes</strong><ul>");
            foreach (var (id, note) in notes) w.WriteLine($"<li{(id is null ? "" : $" id=\"{id}\"")}>{note}</li>");
            w.WriteLine("</ul></div>");
        }
        w.WriteLine("</section>");
    }

    /// <summary>The run's budgets as the records carry them, with the options that set them.</summary>
    private static string Budgets(ResultsSummary s)
    {
        if (s.Budgets is not { } b)
            return "The records carry no budgets (run <code>cellc check</code> with <code>--max-params</code>, <code>--max-macs</code>, ... to set them).";
        var parts = new List<string>();
        if (b.MaxParams is { } p) parts.Add($"<code>--max-params {Html.Whole(p)}</code>");
        if (b.MaxMacs is { } m) parts.Add($"<code>--max-macs {Html.Whole(m)}</code>");
        if (b.MaxActivationMB is { } a) parts.Add($"<code>--max-activation-mb {Html.Number(a)}</code>");
        if (b.MaxTrainMemoryGB is { } t) parts.Add($"<code>--max-train-memory-gb {Html.Number(t)}</code>");
        if (b.MaxLatencyMs is { } l) parts.Add($"<code>--max-latency-ms {Html.Number(l)}</code>");
        return $"Budgets of the run: {string.Join(", ", parts)}. Those on charted figures are drawn as dashed lines.";
    }

    /// <summary>Notes as HTML (already escaped), some with an element id for tests and links.</summary>
    private static List<(string? Id, string Html)> Notes(ReportPage page)
    {
        var s = page.Summary;
        var notes = new List<(string?, string)>();
        if (s.MalformedCount > 0)
        {
            var listed = s.Malformed.Take(10)
                .Select(m => $"<code>{Html.Text(m.Place.ToString())}</code>: {Html.Text(m.Problem.TrimEnd('.'))}");
            var more = s.MalformedCount > 10 ? $"; and {s.MalformedCount - 10:N0} more" : "";
            notes.Add((null, $"{Html.Whole(s.MalformedCount)} {Wording.Noun(s.MalformedCount, "line")} of the results file {(s.MalformedCount == 1 ? "is" : "are")} " +
                $"not a check record and {(s.MalformedCount == 1 ? "was" : "were")} skipped: {string.Join("; ", listed)}{more}."));
        }
        if (page.Scores is { } join)
        {
            notes.Add(("scores-join", $"Scores: {Html.Whole(join.Count)} ids in <code>{Html.Text(join.Name)}</code> with " +
                $"{Wording.Noun(join.Metrics.Count, "metric")} {string.Join(", ", join.Metrics.Select(m => $"<code>{Html.Text(m)}</code>"))}."));
            if (join.NotInResultsCount > 0)
                notes.Add(("scores-without-record", $"{Html.Whole(join.NotInResultsCount)} {(join.NotInResultsCount == 1 ? "id has" : "ids have")} scores but no record here: " +
                    $"{HtmlReportWriter.Ids(join.NotInResults, join.NotInResultsCount)}."));
            if (s.UnscoredTotal > 0)
            {
                var byStatus = string.Join(", ", CheckStatusNames.All.Where(st => s.Unscored(st) > 0).Select(st => $"{st.Name()} {Html.Whole(s.Unscored(st))}"));
                var ok = s.UnscoredOk.Count > 0 ? $"; the ok ones: {HtmlReportWriter.Ids(s.UnscoredOk, s.Unscored(CheckStatus.Ok))}" : "";
                notes.Add(("records-without-score", $"{Html.Whole(s.UnscoredTotal)} {(s.UnscoredTotal == 1 ? "record has" : "records have")} no score ({byStatus}){ok}."));
            }
        }
        if (s.TrivialLeftOut > 0)
            notes.Add(("trivial-left-out", $"{Html.Whole(s.TrivialLeftOut)} ok {Wording.Noun(s.TrivialLeftOut, "candidate")} with the <code>trivial-cell</code> note " +
                "(no op with trainable weights in the cell) are left out of the Pareto fronts and drawn as hollow circles; " +
                "<code>cellc report --include-trivial</code> keeps them."));
        else if (s.IncludeTrivial && s.Trivial > 0)
            notes.Add(("trivial-included", $"{Html.Whole(s.Trivial)} {Wording.Noun(s.Trivial, "candidate")} with the <code>trivial-cell</code> note are kept on the fronts (<code>--include-trivial</code>)."));
        if (s.BudgetSets > 1)
            notes.Add((null, $"The records carry {s.BudgetSets} different sets of budgets (results of several runs?); the charts draw the most common."));
        if (page.TableCapped)
            notes.Add((null, $"The candidate table holds {Html.Whole(page.Rows.Count)} of the {Html.Whole(s.Total)} records: the first by status " +
                "(ok first), then by params. Counts, reasons and charts cover every record."));
        if (s.Points.Count > page.Options.ScatterPointLimit)
            notes.Add((null, $"The scatter plots draw one candidate in {Html.Whole((s.Points.Count + page.Options.ScatterPointLimit - 1) / page.Options.ScatterPointLimit)} " +
                "(and the whole Pareto front); the histograms count every candidate."));
        if (s.WithLatency == 0)
            notes.Add((null, "Latency was not measured (run <code>cellc check</code> with <code>--latency</code>), so there are no latency charts."));
        if (page.NoDrawer)
            notes.Add((null, "Genotypes were given, but no cell drawer: the cells are not drawn."));
        return notes;
    }
}
