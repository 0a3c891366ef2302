using CellCompiler.Screening;

namespace CellCompiler.Reporting;

/// <summary>
/// Writes a <see cref="ReportPage"/> as one HTML document: the outcome (<see cref="OutcomeSection"/>),
/// the charts (<see cref="ChartsSection"/>: inline SVG of class `chart`, one figure per chart with
/// `data-front` and `data-budgets`), every front the charts show, listed and its cells drawn
/// (<see cref="FrontsSection"/>), and the candidate table (<see cref="CandidatesSection"/>,
/// `table#candidates`, one `tr[data-id]` per row). Every text from the records and the scores is
/// escaped; nothing refers to anything outside the file. Statuses are written as the records write
/// them (`over_budget`), reason kinds as the records and the terminal give them.
/// </summary>
public static class HtmlReportWriter
{
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
        OutcomeSection.Write(w, page);
        ChartsSection.Write(w, page);
        FrontsSection.Write(w, page);
        CandidatesSection.Write(w, page);
        w.WriteLine("</main>");
        w.WriteLine("<footer>");
        w.WriteLine("<p>Made by <code>cellc report</code> from the records of <code>cellc check --json</code>. Params and MACs are counted " +
            "on the compiled network; memory figures are estimates; latency is the median at batch 1 on the CPU that ran the check " +
            "and does not transfer to other hardware. This page loads nothing from outside its own file.</p>");
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
        var scores = page.Scores is { } j ? $"; scores from <code>{Html.Text(j.Name)}</code>" : "";
        w.WriteLine($"<p class=\"lede\">{Html.Whole(s.Total)} check {Wording.Noun(s.Total, "record")} from <code>{Html.Text(page.ResultsName)}</code>{genotypes}{scores}</p>");
        w.WriteLine("</div>");
        w.WriteLine("<button id=\"theme-toggle\" type=\"button\">Switch theme</button>");
        w.WriteLine("</header>");
    }

    /// <summary>A status badge: the status as records spell it.</summary>
    public static string Badge(CheckStatus status) =>
        $"<span class=\"badge s-{status.Name()}\">{status.Name()}</span>";

    /// <summary>"a, b, c and 4 more" (escaped, ids in code).</summary>
    public static string Ids(IEnumerable<string> ids, long total)
    {
        var listed = ids.ToList();
        var text = string.Join(", ", listed.Select(id => $"<code>{Html.Text(id)}</code>"));
        return total > listed.Count ? $"{text} and {Html.Whole(total - listed.Count)} more" : text;
    }
}
