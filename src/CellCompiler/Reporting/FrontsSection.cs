namespace CellCompiler.Reporting;

/// <summary>
/// Every Pareto front a chart shows, listed (`table.front-list[data-front]`, one `tr[data-id]` per
/// member), then the cells on any front, one card each (`article.front-card[data-id][data-fronts]`)
/// with its figures, the fronts it is on, and its picture when the population was given.
/// </summary>
public static class FrontsSection
{
    public static void Write(TextWriter w, ReportPage page)
    {
        var s = page.Summary;
        w.WriteLine("<section id=\"fronts\" aria-labelledby=\"fronts-title\">");
        w.WriteLine("<h2 id=\"fronts-title\">Pareto fronts</h2>");
        if (page.Fronts.Count == 0)
        {
            w.WriteLine("<p class=\"empty\">No ok candidate has the figures of any chart, so there is no Pareto front.</p>");
            w.WriteLine("</section>");
            return;
        }
        var trivial = s.IncludeTrivial ? "" : " (cells with the <code>trivial-cell</code> note left out)";
        w.WriteLine($"<p>Each front holds the ok candidates{trivial} that no other ok candidate beats on both of its figures, " +
            "least cost first. Candidates with exactly equal figures are counted, not listed.</p>");

        var ids = page.Fronts.SelectMany(f => f.Members).Select(m => m.Id).Distinct(StringComparer.Ordinal).ToList();
        var cards = ids.Select((id, i) => (id, i)).ToDictionary(p => p.id, p => $"front-cell-{p.i}", StringComparer.Ordinal);
        foreach (var front in page.Fronts)
        {
            w.WriteLine($"<h3 id=\"front-{front.Key}\">Front of {Html.Text(front.Title)} ({Html.Whole(front.Count)})</h3>");
            w.WriteLine($"<table class=\"front-list\" data-front=\"{front.Key}\"><thead><tr><th scope=\"col\">id</th>" +
                $"<th scope=\"col\" class=\"num\">{Html.Text(front.X.Label)}</th><th scope=\"col\" class=\"num\">{Html.Text(front.Y.Label)}</th>" +
                "<th scope=\"col\" class=\"num\">others with equal figures</th></tr></thead><tbody>");
            foreach (var m in front.Members)
                w.WriteLine($"<tr data-id=\"{Html.Attribute(m.Id)}\"><td><a href=\"#{cards[m.Id]}\"><code>{Html.Text(m.Id)}</code></a></td>" +
                    $"<td class=\"num\">{front.X.Show(m.X)}</td><td class=\"num\">{front.Y.Show(m.Y)}</td><td class=\"num\">{Html.Whole(m.Ties)}</td></tr>");
            w.WriteLine("</tbody></table>");
        }

        w.WriteLine("<h3 id=\"front-cells\">Cells on the fronts</h3>");
        if (page.Pictures is null && !page.NoDrawer)
            w.WriteLine("<p class=\"muted\">Give the population file (<code>--genotypes POPULATION.jsonl</code>) to see these cells.</p>");
        var rows = new Dictionary<string, ResultRow>(StringComparer.Ordinal);
        foreach (var row in page.Rows) rows.TryAdd(row.Id, row);
        w.WriteLine("<div class=\"front-grid\">");
        foreach (var id in ids)
        {
            var anchor = cards[id];
            var on = page.Fronts.Where(f => f.Members.Any(m => m.Id == id)).ToList();
            var drawn = page.Pictures?.GetValueOrDefault(id)?.Svg is not null;
            w.WriteLine($"<article class=\"front-card{(drawn ? " drawn" : "")}\" id=\"{anchor}\" data-id=\"{Html.Attribute(id)}\" " +
                $"data-fronts=\"{string.Join(' ', on.Select(f => f.Key))}\">");
            w.WriteLine($"<h4><code>{Html.Text(id)}</code></h4>");
            w.WriteLine($"<p class=\"figs\">{Figures(id, rows.GetValueOrDefault(id), on, s)}</p>");
            w.WriteLine($"<p class=\"on-fronts\">On the fronts of {string.Join("; ", on.Select(f => $"<a href=\"#front-{f.Key}\">{Html.Text(f.Title)}</a>"))}</p>");
            if (page.Pictures is { } pictures)
            {
                if (!pictures.TryGetValue(id, out var picture))
                    w.WriteLine("<p class=\"cell-picture missing\">Not in the genotypes file.</p>");
                else if (picture.Svg is { } svg)
                {
                    // A picture that follows a colour scheme (the page's or the system's) is shown as it is; any other sits on light paper.
                    var themed = svg.Contains("currentColor", StringComparison.OrdinalIgnoreCase)
                        || svg.Contains("prefers-color-scheme", StringComparison.Ordinal);
                    w.WriteLine($"<figure class=\"cell-picture{(themed ? "" : " paper")}\" data-id=\"{Html.Attribute(id)}\">{svg}</figure>");
                }
                else
                    w.WriteLine($"<p class=\"cell-picture missing\">{Html.Text(picture.Problem)}</p>");
            }
            w.WriteLine("</article>");
        }
        w.WriteLine("</div>");
        w.WriteLine("</section>");
    }

    /// <summary>The card's figures: from the table row when it is kept, else from the fronts it is on.</summary>
    private static string Figures(string id, ResultRow? row, IReadOnlyList<FrontSpec> on, ResultsSummary s)
    {
        var parts = new List<string>();
        if (row is not null)
        {
            if (row.Params is { } p) parts.Add($"{Html.Whole(p)} params");
            if (row.Macs is { } m) parts.Add($"{Html.Scaled(m)} MACs");
            if (row.LatencyMs is { } l) parts.Add($"p50 {Html.Milliseconds(l)} ms");
            for (var i = 0; i < s.Objectives.Count && i < row.Objectives.Count; i++)
                if (row.Objectives[i] is { } v) parts.Add($"{Html.Text(s.Objectives[i].Name)} {Html.Significant(v)}");
        }
        else
        {
            var front = on[0];
            var member = front.Members.First(m => m.Id == id);
            parts.Add($"{Html.Text(front.X.Label)} {front.X.Show(member.X)}");
            parts.Add($"{Html.Text(front.Y.Label)} {front.Y.Show(member.Y)}");
        }
        return string.Join(" &middot; ", parts);
    }
}
