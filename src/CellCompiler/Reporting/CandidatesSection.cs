using System.Globalization;
using CellCompiler.Screening;

namespace CellCompiler.Reporting;

/// <summary>
/// The candidate table (`table#candidates`, sortable by any column, filterable): one row per kept
/// record with its status as records spell it, figures, a column per objective, and a marker on
/// candidates that are on any front (its title names the fronts).
/// </summary>
public static class CandidatesSection
{
    private static readonly CultureInfo Invariant = CultureInfo.InvariantCulture;

    public static void Write(TextWriter w, ReportPage page)
    {
        var s = page.Summary;
        var fronts = new Dictionary<string, List<string>>(StringComparer.Ordinal);
        foreach (var front in page.Fronts)
            foreach (var m in front.Members)
            {
                if (!fronts.TryGetValue(m.Id, out var names)) fronts[m.Id] = names = [];
                names.Add(front.Title);
            }
        var predicted = s.WithPrediction > 0;

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
        var headers = Header("id", "text") + Header("status", "num", "ok, over_budget, broken, invalid", right: false) + Header("params", "num") + Header("MACs", "num") +
            Header("p50 ms", "num", "latency p50 at batch 1, milliseconds");
        if (predicted) headers += Header("predicted ms", "num", "predicted latency p50 at batch 1, milliseconds");
        foreach (var objective in s.Objectives)
            headers += Header(objective.Name, "num", objective.Describe(), objective: true);
        headers += Header("act. MB", "num", "peak activation memory at batch 1, MB (10^6 bytes)") +
            Header("train GB", "num", "training memory estimate, GB (10^9 bytes)") +
            Header("hash", "text", "genotype hash (first 10 hex digits)") + Header("reason", "text");
        w.WriteLine($"<thead><tr>{headers}</tr></thead>");
        w.WriteLine("<tbody>");
        foreach (var row in page.Rows)
        {
            var on = fronts.GetValueOrDefault(row.Id);
            w.Write($"<tr data-id=\"{Html.Attribute(row.Id)}\" data-status=\"{row.Status.Name()}\"{(on is null ? "" : " class=\"on-front\"")}>");
            var pin = on is null ? "" : $"<span class=\"pin\" title=\"on the Pareto fronts of {Html.Attribute(string.Join("; ", on))}\">&#9670;</span>";
            w.Write($"<td class=\"id\"><code>{Html.Text(row.Id)}</code>{pin}</td>");
            w.Write($"<td data-v=\"{(int)row.Status}\">{HtmlReportWriter.Badge(row.Status)}</td>");
            Number(w, row.Params, v => Html.Whole(v));
            Number(w, row.Macs, v => Html.Scaled(v), exactTitle: true);
            Real(w, row.LatencyMs, Html.Milliseconds);
            if (predicted) Real(w, row.LatencyPredictedMs, Html.Milliseconds);
            for (var i = 0; i < s.Objectives.Count; i++)
                Real(w, i < row.Objectives.Count ? row.Objectives[i] : null, Html.Significant);
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

    private static string Header(string title, string type, string? explanation = null, bool right = true, bool objective = false)
    {
        var classes = new List<string>();
        if (type == "num" && right) classes.Add("num");
        if (objective) classes.Add("objective");
        return $"<th scope=\"col\" data-type=\"{type}\"{(classes.Count > 0 ? $" class=\"{string.Join(' ', classes)}\"" : "")}" +
            $"{(explanation is null ? "" : $" title=\"{Html.Attribute(explanation)}\"")}><button type=\"button\">{Html.Text(title)}</button></th>";
    }

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

    private static void Real(TextWriter w, double? value, Func<double, string> format)
    {
        if (value is { } v) w.Write($"<td class=\"num\" data-v=\"{Html.Number(v)}\">{format(v)}</td>");
        else w.Write("<td class=\"num\" data-v=\"\">&ndash;</td>");
    }
}
