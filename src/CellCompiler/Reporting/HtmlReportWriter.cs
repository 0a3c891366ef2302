using System.Globalization;
using CellCompiler.Screening;

namespace CellCompiler.Reporting;

/// <summary>
/// Writes a <see cref="ReportPage"/> as one HTML document: the outcome (counts by status, top
/// reasons, notes), the charts (inline SVG, ids `chart-params-macs`, `chart-params-latency`,
/// `chart-params-hist`, `chart-macs-hist`, class `chart`), the Pareto front with its cells'
/// pictures, and the candidate table (`table#candidates`, one `tr[data-id]` per row). Every text
/// from the records is escaped; nothing refers to anything outside the file.
/// </summary>
public static class HtmlReportWriter
{
    private static readonly CultureInfo Invariant = CultureInfo.InvariantCulture;
    private static readonly CheckStatus[] Statuses = [CheckStatus.Ok, CheckStatus.OverBudget, CheckStatus.Broken, CheckStatus.Invalid];

    public static void Write(TextWriter w, ReportPage page)
    {
        w.WriteLine("<!DOCTYPE html>");
        w.WriteLine("<html lang=\"en\">");
        w.WriteLine("<head>");
        w.WriteLine("<meta charset=\"utf-8\">");
        w.WriteLine("<meta name=\"viewport\" content=\"width=device-width, initial-scale=1\">");
        w.WriteLine("<meta name=\"color-scheme\" content=\"light dark\">");
        w.WriteLine("<meta name=\"generator\" content=\"cellc report\">");
        w.WriteLine($"<title>{Html.Text(page.Title)}</title>");
        w.WriteLine($"<style>\n{ReportStyle.Css}\n</style>");
        w.WriteLine($"<script>{ReportStyle.EarlyScript}</script>");
        w.WriteLine("</head>");
        w.WriteLine("<body>");
        Masthead(w, page);
        w.WriteLine("<main>");
        Outcome(w, page);
        Charts(w, page);
        Front(w, page);
        Table(w, page);
        w.WriteLine("</main>");
        w.WriteLine("<footer>");
        w.WriteLine("<p>Made by <code>cellc report</code> from the records of <code>cellc check --json</code>. Params and MACs are counted " +
            "on the compiled network; latency is the median at batch 1 on the machine that ran the check. This page loads nothing " +
            "from outside its own file.</p>");
        w.WriteLine("</footer>");
        w.WriteLine($"<script>\n{ReportStyle.Script}\n</script>");
        w.WriteLine("</body>");
        w.WriteLine("</html>");
    }

    private static void Masthead(TextWriter w, ReportPage page)
    {
        var s = page.Summary;
        w.WriteLine("<header class=\"masthead\">");
        w.WriteLine("<div>");
        w.WriteLine("<p class=\"kicker\">Cell screening</p>");
        w.WriteLine($"<h1>{Html.Text(page.Title)}</h1>");
        var genotypes = page.GenotypesPath is { } g ? $"; cells from <code>{Html.Text(g)}</code>" : "";
        w.WriteLine($"<p class=\"lede\">{Html.Whole(s.Total)} check {Plural(s.Total, "record")} from <code>{Html.Text(page.ResultsName)}</code>{genotypes}</p>");
        w.WriteLine("</div>");
        w.WriteLine("<button id=\"theme-toggle\" type=\"button\">Switch theme</button>");
        w.WriteLine("</header>");
    }

    private static void Outcome(TextWriter w, ReportPage page)
    {
        var s = page.Summary;
        w.WriteLine("<section id=\"outcome\" aria-labelledby=\"outcome-title\">");
        w.WriteLine("<h2 id=\"outcome-title\">Outcome</h2>");
        w.WriteLine("<div class=\"tiles\" id=\"status-counts\">");
        foreach (var status in Statuses)
        {
            var count = s.Count(status);
            w.WriteLine($"<div class=\"tile status-count s-{status.Name()}\" data-status=\"{status.Name()}\" data-count=\"{count}\">" +
                $"<span class=\"tile-n\">{Html.Whole(count)}</span><span class=\"tile-share\">{Html.Percent(count, s.Total)}</span>" +
                $"<span class=\"tile-label\">{Label(status)}</span></div>");
        }
        w.WriteLine("</div>");
        w.Write("<div class=\"meter\" role=\"img\" aria-label=\"Share of records by status\">");
        foreach (var status in Statuses)
        {
            var count = s.Count(status);
            if (count == 0) continue;
            var width = (100.0 * count / s.Total).ToString("0.###", Invariant);
            w.Write($"<span class=\"s-{status.Name()}\" style=\"width:{width}%\" title=\"{Label(status)}: {Html.Whole(count)}\"></span>");
        }
        w.WriteLine("</div>");

        w.WriteLine("<ul class=\"facts\">");
        w.WriteLine($"<li><b>{Html.Whole(s.Total)}</b> {Plural(s.Total, "record")}</li>");
        w.WriteLine($"<li><b>{Html.Whole(s.Points.Count)}</b> with params and MACs</li>");
        w.WriteLine($"<li><b>{Html.Whole(s.WithLatency)}</b> with latency measured</li>");
        w.WriteLine($"<li><b>{Html.Whole(s.ParamsVsMacs.Points.Count)}</b> on the Pareto front (params, MACs)</li>");
        if (s.Cached > 0) w.WriteLine($"<li><b>{Html.Whole(s.Cached)}</b> from the check cache</li>");
        w.WriteLine("</ul>");

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
            foreach (var note in notes) w.WriteLine($"<li>{note}</li>");
            w.WriteLine("</ul></div>");
        }
        w.WriteLine("</section>");
    }

    /// <summary>Notes as HTML (already escaped).</summary>
    private static List<string> Notes(ReportPage page)
    {
        var s = page.Summary;
        var notes = new List<string>();
        if (s.MalformedCount > 0)
        {
            var listed = s.Malformed.Take(10)
                .Select(m => $"<code>{Html.Text(m.Place.ToString())}</code>: {Html.Text(m.Problem.TrimEnd('.'))}");
            var more = s.MalformedCount > 10 ? $"; and {s.MalformedCount - 10:N0} more" : "";
            notes.Add($"{Html.Whole(s.MalformedCount)} {Plural(s.MalformedCount, "line")} of the results file {(s.MalformedCount == 1 ? "is" : "are")} " +
                $"not a check record and {(s.MalformedCount == 1 ? "was" : "were")} skipped: {string.Join("; ", listed)}{more}.");
        }
        if (page.TableCapped)
            notes.Add($"The candidate table holds {Html.Whole(page.Rows.Count)} of the {Html.Whole(s.Total)} records: the first by status " +
                "(ok first), then by params. Counts, reasons and charts cover every record.");
        if (s.Points.Count > page.Options.ScatterPointLimit)
            notes.Add($"The scatter plots draw one candidate in {Html.Whole((s.Points.Count + page.Options.ScatterPointLimit - 1) / page.Options.ScatterPointLimit)} " +
                "(and the whole Pareto front); the histograms count every candidate.");
        if (s.WithLatency == 0)
            notes.Add("Latency was not measured (run <code>cellc check</code> with <code>--latency</code>), so there is no latency chart.");
        if (page.NoDrawer)
            notes.Add("Genotypes were given, but no cell drawer: the cells are not drawn.");
        return notes;
    }

    private static void Charts(TextWriter w, ReportPage page)
    {
        var s = page.Summary;
        var limit = page.Options.ScatterPointLimit;
        w.WriteLine("<section id=\"charts\" aria-labelledby=\"charts-title\">");
        w.WriteLine("<h2 id=\"charts-title\">Cost</h2>");
        w.WriteLine("<div class=\"chart-grid\">");
        Chart(w, "chart-params-macs", "Params against MACs",
            $"{Html.Whole(s.Points.Count)} candidates with figures; {FrontCaption(s.ParamsVsMacs.Points.Count)}",
            ReportCharts.ParamsVsMacs(s, limit));
        var withBoth = s.Points.Count(p => p.HasLatency);
        if (withBoth > 0)
            Chart(w, "chart-params-latency", "Params against latency p50 (batch 1)",
                $"{Html.Whole(withBoth)} candidates with latency; {FrontCaption(s.ParamsVsLatency.Points.Count)}",
                ReportCharts.ParamsVsLatency(s, limit));
        Chart(w, "chart-params-hist", "Params", "How many candidates fall in each range of params",
            ReportCharts.ParamsHistogram(s));
        Chart(w, "chart-macs-hist", "MACs", "How many candidates fall in each range of MACs",
            ReportCharts.MacsHistogram(s));
        w.WriteLine("</div>");
        w.WriteLine("</section>");
    }

    private static string FrontCaption(int front) => front == 0
        ? "no ok candidate, so no Pareto front"
        : $"the diamonds are the Pareto front of the ok ones ({Html.Whole(front)})";

    private static void Chart(TextWriter w, string id, string title, string caption, OxyPlot.PlotModel model)
    {
        w.WriteLine($"<figure class=\"chart-card\" aria-labelledby=\"{id}-title\">");
        w.WriteLine($"<figcaption><strong id=\"{id}-title\">{Html.Text(title)}</strong><span>{caption}</span></figcaption>");
        w.WriteLine(ChartSvg.Export(model, id, title));
        w.WriteLine("</figure>");
    }

    private static void Front(TextWriter w, ReportPage page)
    {
        var s = page.Summary;
        var front = s.ParamsVsMacs.Points;
        w.WriteLine("<section id=\"front\" aria-labelledby=\"front-title\">");
        w.WriteLine("<h2 id=\"front-title\">Pareto front</h2>");
        if (front.Count == 0)
        {
            w.WriteLine("<p class=\"empty\">No candidate is ok, so there is no Pareto front.</p>");
            w.WriteLine("</section>");
            return;
        }
        w.WriteLine("<p>The ok candidates that no other ok candidate beats on both params and MACs, fewest params first.</p>");
        if (page.Pictures is null && !page.NoDrawer)
            w.WriteLine("<p class=\"muted\">Give the population file (<code>--genotypes POPULATION.jsonl</code>) to see these cells.</p>");
        w.WriteLine("<div class=\"front-grid\">");
        foreach (var point in front)
        {
            var drawn = page.Pictures?.GetValueOrDefault(point.Id)?.Svg is not null;
            w.WriteLine($"<article class=\"front-card{(drawn ? " drawn" : "")}\" data-id=\"{Html.Attribute(point.Id)}\">");
            w.WriteLine($"<h3><code>{Html.Text(point.Id)}</code></h3>");
            var ties = point.Ties > 0 ? $" &middot; {Html.Whole(point.Ties)} more with these figures" : "";
            w.WriteLine($"<p class=\"figs\">{Html.Whole((long)point.X)} params &middot; {Html.Scaled(point.Y)} MACs{ties}</p>");
            if (page.Pictures is { } pictures)
            {
                if (!pictures.TryGetValue(point.Id, out var picture))
                    w.WriteLine("<p class=\"cell-picture missing\">Not in the genotypes file.</p>");
                else if (picture.Svg is { } svg)
                {
                    // A picture that follows a colour scheme (the page's or the system's) is shown as it is; any other sits on light paper.
                    var themed = svg.Contains("currentColor", StringComparison.OrdinalIgnoreCase)
                        || svg.Contains("prefers-color-scheme", StringComparison.Ordinal);
                    w.WriteLine($"<figure class=\"cell-picture{(themed ? "" : " paper")}\" data-id=\"{Html.Attribute(point.Id)}\">{svg}</figure>");
                }
                else
                    w.WriteLine($"<p class=\"cell-picture missing\">{Html.Text(picture.Problem)}</p>");
            }
            w.WriteLine("</article>");
        }
        w.WriteLine("</div>");

        var latencyFront = s.ParamsVsLatency.Points;
        if (latencyFront.Count > 0)
        {
            w.WriteLine("<h3>Pareto front of params and latency p50</h3>");
            w.WriteLine("<table class=\"front-list\" id=\"latency-front\"><thead><tr><th scope=\"col\">id</th>" +
                "<th scope=\"col\" class=\"num\">params</th><th scope=\"col\" class=\"num\">latency p50 (ms)</th></tr></thead><tbody>");
            foreach (var p in latencyFront)
                w.WriteLine($"<tr data-id=\"{Html.Attribute(p.Id)}\"><td><code>{Html.Text(p.Id)}</code></td>" +
                    $"<td class=\"num\">{Html.Whole((long)p.X)}</td><td class=\"num\">{Html.Milliseconds(p.Y)}</td></tr>");
            w.WriteLine("</tbody></table>");
        }
        w.WriteLine("</section>");
    }

    private static void Table(TextWriter w, ReportPage page)
    {
        var s = page.Summary;
        var onFront = s.ParamsVsMacs.Points.Select(p => p.Id).ToHashSet(StringComparer.Ordinal);
        w.WriteLine("<section id=\"candidates-section\" aria-labelledby=\"candidates-title\">");
        w.WriteLine("<h2 id=\"candidates-title\">Candidates</h2>");
        if (page.TableCapped)
            w.WriteLine($"<p class=\"muted\">{Html.Whole(page.Rows.Count)} of {Html.Whole(s.Total)} records: the first by status, then params.</p>");
        w.WriteLine("<div class=\"table-tools\">");
        w.WriteLine("<input id=\"filter\" type=\"search\" placeholder=\"Filter: id, status, reason...\" aria-label=\"Filter the candidates\" autocomplete=\"off\">");
        w.WriteLine($"<span id=\"shown\">{Html.Whole(page.Rows.Count)} rows</span>");
        w.WriteLine("<span class=\"muted\">Click a column header to sort.</span>");
        w.WriteLine("</div>");
        w.WriteLine("<div class=\"table-wrap\">");
        w.WriteLine("<table id=\"candidates\" class=\"sortable\">");
        w.WriteLine("<thead><tr>" +
            Header("id", "text") + Header("status", "num", "ok, over budget, broken, invalid", right: false) + Header("params", "num") + Header("MACs", "num") +
            Header("p50 ms", "num", "latency p50 at batch 1, milliseconds") +
            Header("act. MB", "num", "peak activation memory at batch 1, MB (10^6 bytes)") +
            Header("train GB", "num", "training memory estimate, GB (10^9 bytes)") +
            Header("hash", "text", "genotype hash (first 10 hex digits)") + Header("reason", "text") + "</tr></thead>");
        w.WriteLine("<tbody>");
        foreach (var row in page.Rows)
        {
            var front = onFront.Contains(row.Id);
            w.Write($"<tr data-id=\"{Html.Attribute(row.Id)}\" data-status=\"{row.Status.Name()}\"{(front ? " class=\"on-front\"" : "")}>");
            w.Write($"<td class=\"id\"><code>{Html.Text(row.Id)}</code>{(front ? "<span class=\"pin\" title=\"on the Pareto front of params and MACs\">&#9670;</span>" : "")}</td>");
            w.Write($"<td data-v=\"{(int)row.Status}\"><span class=\"badge s-{row.Status.Name()}\">{Label(row.Status)}</span></td>");
            Number(w, row.Params, v => Html.Whole(v));
            Number(w, row.Macs, v => Html.Scaled(v), exactTitle: true);
            if (row.LatencyMs is { } ms) w.Write($"<td class=\"num\" data-v=\"{Html.Number(ms)}\">{Html.Milliseconds(ms)}</td>");
            else w.Write("<td class=\"num\" data-v=\"\">&ndash;</td>");
            Number(w, row.PeakActivationBytes, Html.Megabytes);
            Number(w, row.TrainMemoryBytes, v => (v / 1e9).ToString("0.###", Invariant));
            w.Write(row.Hash is { } hash
                ? $"<td><code title=\"{Html.Attribute(hash)}\">{Html.Text(hash.Length > 10 ? hash[..10] : hash)}</code></td>"
                : "<td></td>");
            w.Write($"<td class=\"reason\">{Html.Text(row.Reason)}</td>");
            w.WriteLine("</tr>");
        }
        w.WriteLine("</tbody>");
        w.WriteLine("</table>");
        w.WriteLine("</div>");
        w.WriteLine("</section>");
    }

    private static string Header(string title, string type, string? explanation = null, bool right = true) =>
        $"<th scope=\"col\" data-type=\"{type}\"{(type == "num" && right ? " class=\"num\"" : "")}" +
        $"{(explanation is null ? "" : $" title=\"{Html.Attribute(explanation)}\"")}><button type=\"button\">{Html.Text(title)}</button></th>";

    private static void Number(TextWriter w, long? value, Func<long, string> format, bool exactTitle = false)
    {
        if (value is not { } v)
        {
            w.Write("<td class=\"num\" data-v=\"\">&ndash;</td>");
            return;
        }
        var title = exactTitle ? $" title=\"{Html.Whole(v)}\"" : "";
        w.Write($"<td class=\"num\" data-v=\"{v}\"{title}>{format(v)}</td>");
    }

    private static string Label(CheckStatus status) => status switch
    {
        CheckStatus.Ok => "ok",
        CheckStatus.OverBudget => "over budget",
        CheckStatus.Broken => "broken",
        _ => "invalid",
    };

    private static string Plural(long count, string word) => count == 1 ? word : word + "s";
}
