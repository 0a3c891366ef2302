using System.Text.Json;
using System.Text.RegularExpressions;
using CellCompiler.Reporting;
using CellCompiler.Screening;
using CellCompiler.Tests.Support;

namespace CellCompiler.Tests;

/// <summary>
/// The results the report tests read: `cellc check` run once through the real process on the
/// population fixture without latency, and once with a tiny latency measurement.
/// </summary>
public sealed class CheckedPopulation : IDisposable
{
    public static readonly string Population = RepoPaths.Fixture("tidepool-population.jsonl");

    public CheckedPopulation()
    {
        Plain = Check("plain.jsonl");
        Latency = Check("latency.jsonl", "--latency", "--runs", "3", "--warmup", "1");
    }

    public TempFolder Folder { get; } = new();

    /// <summary>`check --json` output without latency.</summary>
    public string Plain { get; }

    /// <summary>`check --json` output with latency p50 at batch 1.</summary>
    public string Latency { get; }

    private string Check(string name, params string[] more)
    {
        var result = ProcessRunner.Cellc(["check", Population, "--json", "--ordered", "--no-cache", .. more], null, Folder.Path);
        // Exit 1: the fixture holds a dead cell and an invalid line, so some candidates fail (contract section 5).
        Assert.True(result.ExitCode == 1, $"cellc check exited {result.ExitCode}: {result.Stderr}");
        return Folder.Write(name, result.Stdout);
    }

    public void Dispose() => Folder.Dispose();
}

/// <summary>
/// `cellc report` (issue 5): through the real process, on `cellc check --json` output made by the real
/// process; the page is opened in headless Chromium (Debian's chromium, launched with a fresh profile
/// and without network services) and its DOM, after the page's own script ran, is searched for every
/// chart, every candidate row and the counts by status. Expected figures come from the results file,
/// read here with System.Text.Json; the Pareto front from the library's <see cref="ParetoFront"/>,
/// which `cellc check` prints the same way.
/// </summary>
public sealed partial class ReportTests(CheckedPopulation run) : IClassFixture<CheckedPopulation>
{
    private const string Chromium = "/usr/bin/chromium";

    private static readonly string[] AllCharts = ["chart-latency-macs", "chart-params-latency", "chart-params-macs", "chart-params-hist", "chart-macs-hist"];

    /// <summary>Namespace names, never fetched: the only http(s) strings a self-contained page may hold.</summary>
    private static readonly string[] NamespaceUris =
        ["http://www.w3.org/2000/svg", "http://www.w3.org/1999/xlink", "http://www.w3.org/1999/xhtml"];

    private sealed record Expected(string Id, string Status, long? Params, long? Macs, double? Latency, bool Trivial);

    private static List<Expected> Records(string resultsPath) =>
        File.ReadLines(resultsPath).Where(l => l.Trim().Length > 0).Select(line =>
        {
            var r = JsonDocument.Parse(line).RootElement;
            long? Whole(string name) => r.TryGetProperty(name, out var v) && v.ValueKind == JsonValueKind.Number ? v.GetInt64() : null;
            double? latency = r.TryGetProperty("latency_ms", out var l) && l.ValueKind == JsonValueKind.Number ? l.GetDouble() : null;
            var trivial = r.TryGetProperty("notes", out var notes) && notes.EnumerateArray().Any(n => n.GetString() == "trivial-cell");
            return new Expected(r.GetProperty("id").GetString()!, r.GetProperty("status").GetString()!, Whole("params"), Whole("macs"), latency, trivial);
        }).ToList();

    /// <summary>
    /// Every candidate on a front the page shows (params/MACs, and with latency params/latency and
    /// MACs/latency), each once, computed here on their own (<see cref="ReportScoresTests.Front"/>).
    /// </summary>
    private static List<string> FrontIds(IEnumerable<Expected> records)
    {
        var ok = records.Where(r => r.Status == "ok" && !r.Trivial && r.Params is not null && r.Macs is not null).ToList();
        var fronts = new List<List<string>> { ReportScoresTests.Front(ok.Select(r => (r.Id, (double)r.Params!.Value, (double)r.Macs!.Value))) };
        var timed = ok.Where(r => r.Latency is not null).ToList();
        if (timed.Count > 0)
        {
            fronts.Add(ReportScoresTests.Front(timed.Select(r => (r.Id, (double)r.Macs!.Value, r.Latency!.Value))));
            fronts.Add(ReportScoresTests.Front(timed.Select(r => (r.Id, (double)r.Params!.Value, r.Latency!.Value))));
        }
        return fronts.SelectMany(f => f).Distinct().ToList();
    }

    private ProcessResult Report(params string[] args) => ProcessRunner.Cellc(["report", .. args], null, run.Folder.Path);

    private string WriteReport(string results, string name, params string[] more)
    {
        var output = run.Folder.File(name);
        var result = Report([results, "-o", output, .. more]);
        Assert.True(result.ExitCode == 0, $"cellc report exited {result.ExitCode}: {result.Stderr}");
        Assert.True(File.Exists(output), result.Stderr);
        return output;
    }

    /// <summary>The page's DOM after load (and after its script ran), as headless Chromium serialises it.</summary>
    private static string DumpDom(string htmlPath)
    {
        // The issue fixes Chromium as the browser of this test: missing, it fails (scripts/test.sh and .ci/run install it).
        Assert.True(File.Exists(Chromium), $"{Chromium} is missing: install Debian's chromium package (apt-get install -y chromium)");
        using var profile = new TempFolder();
        var result = ProcessRunner.Run(Chromium,
        [
            "--headless", "--no-sandbox", "--disable-gpu", "--disable-quic", "--no-first-run",
            "--disable-background-networking", "--disable-component-update", "--disable-sync",
            $"--user-data-dir={profile.Path}", "--dump-dom", new Uri(htmlPath).AbsoluteUri,
        ], timeout: TimeSpan.FromMinutes(2));
        Assert.True(result.ExitCode == 0, $"chromium exited {result.ExitCode}: {result.Stderr}");
        Assert.Contains("</html>", result.Stdout);
        return result.Stdout;
    }

    private static string Attribute(string tag, string name) =>
        Regex.Match(tag, $"\\s{name}=\"([^\"]*)\"") is { Success: true } m ? m.Groups[1].Value : "";

    /// <summary>The chart SVG elements: every svg element of class `chart`, by id.</summary>
    private static List<string> ChartIds(string dom) =>
        SvgTag().Matches(dom).Select(m => m.Value)
            .Where(tag => Attribute(tag, "class").Split(' ').Contains("chart"))
            .Select(tag => Attribute(tag, "id")).ToList();

    /// <summary>The ids of the candidate table's body rows, in page order.</summary>
    private static List<string> TableRowIds(string dom)
    {
        var start = dom.IndexOf("<table id=\"candidates\"", StringComparison.Ordinal);
        Assert.True(start >= 0, "no candidate table (table#candidates)");
        var body = dom[start..dom.IndexOf("</table>", start, StringComparison.Ordinal)];
        return RowTag().Matches(body).Select(m => System.Net.WebUtility.HtmlDecode(m.Groups[1].Value)).ToList();
    }

    private static Dictionary<string, long> StatusCounts(string dom) =>
        Regex.Matches(dom, "<div class=\"tile status-count[^\"]*\" data-status=\"([a-z_]+)\" data-count=\"([0-9]+)\"")
            .ToDictionary(m => m.Groups[1].Value, m => long.Parse(m.Groups[2].Value));

    private static void AssertCounts(List<Expected> records, string dom)
    {
        var counts = StatusCounts(dom);
        foreach (var status in new[] { "ok", "over_budget", "broken", "invalid" })
            Assert.Equal((status, (long)records.Count(r => r.Status == status)), (status, counts.GetValueOrDefault(status, -1)));
    }

    [Fact]
    public void Latency_report_in_Chromium_shows_every_chart_one_row_per_record_and_the_counts()
    {
        var records = Records(run.Latency);
        Assert.Contains(records, r => r.Latency is not null);
        var html = WriteReport(run.Latency, "latency.html", "--genotypes", CheckedPopulation.Population, "--title", "Tidepool check");

        var dom = DumpDom(html);

        // The four charts, each an inline svg element of class chart, each once.
        Assert.Equal(AllCharts.Order(), ChartIds(dom).Order());
        // Each chart holds drawn marks (OxyPlot's scatter points are ellipses, histogram bars polygons).
        foreach (var chart in AllCharts)
        {
            var start = dom.IndexOf($"id=\"{chart}\"", StringComparison.Ordinal);
            var svg = dom[start..dom.IndexOf("</svg>", start, StringComparison.Ordinal)];
            Assert.True(Regex.IsMatch(svg, "<(ellipse|polygon|path|rect)\\b"), $"{chart} draws nothing");
            Assert.Contains("<text", svg);
        }
        // One row per record, in the results' order (within the table limit, reading order is kept).
        Assert.Equal(records.Select(r => r.Id), TableRowIds(dom));
        AssertCounts(records, dom);
        // The page's script ran in the browser: it fills in the row count.
        Assert.Contains($"{records.Count} of {records.Count} rows shown", dom);
        Assert.Contains("<title>Tidepool check</title>", dom);
        // Top reasons, grouped as `cellc check` groups them in its own summary.
        Assert.Contains(">dead cell<", dom);
        Assert.Contains(">invalid: unknown op<", dom);
        // Every candidate on a front the page shows: one card each.
        var front = FrontIds(records);
        Assert.NotEmpty(front);
        foreach (var id in front)
            Assert.Contains($"<article class=\"front-card", Regex.Match(dom, $"<article[^>]*data-id=\"{Regex.Escape(id)}\"").Value);
        Assert.Equal(front.Count, Regex.Matches(dom, "<article class=\"front-card").Count);
        // Cells are drawn when the CLI is given a drawer; whatever is drawn is an inline svg element.
        foreach (Match picture in Regex.Matches(dom, "<figure class=\"cell-picture[^\"]*\"[^>]*>"))
            Assert.StartsWith("<svg", dom[(picture.Index + picture.Length)..].TrimStart());
    }

    [Fact]
    public void Report_without_latency_has_three_charts_and_says_why_the_fourth_is_missing()
    {
        var records = Records(run.Plain);
        Assert.All(records, r => Assert.Null(r.Latency));
        var html = WriteReport(run.Plain, "plain.html");

        var dom = DumpDom(html);

        Assert.Equal(new[] { "chart-macs-hist", "chart-params-hist", "chart-params-macs" }, ChartIds(dom).Order());
        Assert.Contains("Latency was not measured", dom);
        Assert.Equal(records.Select(r => r.Id), TableRowIds(dom));
        AssertCounts(records, dom);
        // Without --genotypes the front is listed, with no picture.
        Assert.DoesNotContain("<figure class=\"cell-picture", dom);
        Assert.Equal(FrontIds(records).Count, Regex.Matches(dom, "<article class=\"front-card").Count);
    }

    [Fact]
    public void The_page_references_nothing_outside_its_own_file()
    {
        var html = File.ReadAllText(WriteReport(run.Latency, "offline.html", "--genotypes", CheckedPopulation.Population));

        var urls = Regex.Matches(html, "https?://[^\\s\"'<>)]*", RegexOptions.IgnoreCase).Select(m => m.Value).Distinct().ToList();
        Assert.All(urls, url => Assert.Contains(url, NamespaceUris));
        // No fetched resource of any kind: no src, no stylesheet link, no import, only in-page references.
        Assert.DoesNotMatch("(?i)\\ssrc\\s*=", html);
        Assert.DoesNotMatch("(?i)<link\\b", html);
        Assert.DoesNotMatch("(?i)@import|@font-face", html);
        Assert.DoesNotMatch("(?i)url\\(\\s*[^#\\s]", html);
        Assert.All(Regex.Matches(html, "(?i)\\shref\\s*=\\s*\"([^\"]*)\"").Select(m => m.Groups[1].Value),
            href => Assert.StartsWith("#", href));
        // The charts follow the page's light and dark themes; both are in the page, with a toggle.
        Assert.Contains("prefers-color-scheme: dark", html);
        Assert.Contains("id=\"theme-toggle\"", html);
    }

    [Fact]
    public void Element_ids_are_unique_across_all_charts_and_pictures()
    {
        var html = File.ReadAllText(WriteReport(run.Latency, "ids.html", "--genotypes", CheckedPopulation.Population));

        var ids = Regex.Matches(html, "\\sid=\"([^\"]+)\"").Select(m => m.Groups[1].Value).ToList();
        Assert.NotEmpty(ids);
        Assert.Empty(ids.GroupBy(id => id).Where(g => g.Count() > 1).Select(g => g.Key));
        // Every in-page reference points at an element of the page.
        foreach (Match reference in Regex.Matches(html, "url\\(#([^)]+)\\)"))
            Assert.Contains(reference.Groups[1].Value, ids);
    }

    [Fact]
    public void Lines_that_are_not_records_are_reported_with_file_and_line_then_skipped()
    {
        var records = Records(run.Plain);
        var results = run.Folder.Write("with-bad-lines.jsonl",
            File.ReadAllText(run.Plain) + "not json at all\n\n{\"id\":\"x\"}\n{\"id\":\"y\",\"status\":\"ok\",\"params\":\"many\"}\n");
        var output = run.Folder.File("with-bad-lines.html");

        var result = Report(results, "-o", output);

        Assert.True(result.ExitCode == 0, result.Stderr);
        // Lines 7, 9 and 10 (8 is blank, which is no problem).
        var n = records.Count;
        Assert.Contains($"with-bad-lines.jsonl:{n + 1}: ", result.Stderr);
        Assert.Contains($"with-bad-lines.jsonl:{n + 3}: ", result.Stderr);
        Assert.Contains($"with-bad-lines.jsonl:{n + 4}: ", result.Stderr);
        Assert.DoesNotContain($"with-bad-lines.jsonl:{n + 2}:", result.Stderr);
        var html = File.ReadAllText(output);
        Assert.Equal(records.Select(r => r.Id), TableRowIds(html));
        Assert.Contains($"with-bad-lines.jsonl:{n + 1}</code>", html);
    }

    [Fact]
    public void A_file_without_records_is_bad_input_and_writes_nothing()
    {
        using var folder = new TempFolder();
        var output = folder.File("report.html");

        // The population instead of the results: JSON objects, but no status.
        var result = ProcessRunner.Cellc(["report", CheckedPopulation.Population, "-o", output], null, folder.Path);

        Assert.Equal(2, result.ExitCode);
        Assert.Contains("no check records", result.Stderr);
        Assert.False(File.Exists(output));
        Assert.Empty(Directory.GetFileSystemEntries(folder.Path));

        var missing = ProcessRunner.Cellc(["report", folder.File("absent.jsonl"), "-o", output], null, folder.Path);
        Assert.Equal(2, missing.ExitCode);
        Assert.Contains("absent.jsonl", missing.Stderr);
        Assert.False(File.Exists(output));
    }

    [Fact]
    public void A_capped_table_keeps_the_first_rows_by_status_then_params_and_says_so()
    {
        var records = Records(run.Plain);
        var html = File.ReadAllText(WriteReport(run.Plain, "capped.html", "--table-rows", "3"));

        var expected = records
            .Select((r, i) => (r, i))
            .OrderBy(x => Array.IndexOf(["ok", "over_budget", "broken", "invalid"], x.r.Status))
            .ThenBy(x => x.r.Params ?? long.MaxValue).ThenBy(x => x.i)
            .Take(3).Select(x => x.r.Id);
        Assert.Equal(expected, TableRowIds(html));
        Assert.Contains($"The candidate table holds 3 of the {records.Count} records", html);
        // Counts still cover every record.
        AssertCounts(records, html);
    }

    [Fact]
    public void Pareto_front_cells_are_drawn_with_the_given_drawer_keyed_by_id()
    {
        var front = FrontIds(Records(run.Latency));
        var drawn = new List<string>();
        string Stub(Input.Genotype genotype)
        {
            drawn.Add(genotype.Id ?? genotype.Name);
            return "<?xml version=\"1.0\"?>\n<svg xmlns=\"http://www.w3.org/2000/svg\" width=\"40\" height=\"20\">" +
                "<defs><clipPath id=\"box\"><rect width=\"40\" height=\"20\"/></clipPath></defs>" +
                $"<g clip-path=\"url(#box)\"><text x=\"2\" y=\"14\">STUB-CELL:{genotype.Id}</text></g></svg>";
        }

        var report = HtmlReport.Build(run.Latency, new ReportOptions { GenotypesPath = CheckedPopulation.Population, DrawCell = Stub });

        Assert.Empty(report.Warnings);
        Assert.Equal(front.Order(), drawn.Order());
        Assert.Equal(front.Count, report.Pictures);
        foreach (var id in front)
        {
            var picture = Regex.Match(report.Html, $"<figure class=\"cell-picture[^\"]*\" data-id=\"{Regex.Escape(id)}\">(.*?)</figure>", RegexOptions.Singleline);
            Assert.True(picture.Success, $"no picture for {id}");
            Assert.Contains($"STUB-CELL:{id}", picture.Groups[1].Value);
            // Inlined: no XML declaration; ids made unique on the page; a viewBox so it scales.
            Assert.DoesNotContain("<?xml", picture.Groups[1].Value);
            var prefix = Regex.Match(picture.Groups[1].Value, "id=\"(cell[0-9]+-)box\"").Groups[1].Value;
            Assert.NotEmpty(prefix);
            Assert.Contains($"url(#{prefix}box)", picture.Groups[1].Value);
            Assert.Contains("viewBox=\"0 0 40 20\"", picture.Groups[1].Value);
        }
        Assert.Equal(front.Count, Regex.Matches(report.Html, "id=\"(cell[0-9]+-)box\"").Select(m => m.Groups[1].Value).Distinct().Count());

        // Ids not in the population are skipped, with a warning.
        var elsewhere = run.Folder.Write("other-population.jsonl",
            "{\"id\":\"someone-else\",\"format\":\"genotype/1\",\"levels\":[{\"nodes\":2,\"motifs\":{\"cell\":{\"edges\":[[0,1,\"conv3x3\"]]}}}]}\n");
        var partial = HtmlReport.Build(run.Latency, new ReportOptions { GenotypesPath = elsewhere, DrawCell = Stub });
        Assert.Equal(0, partial.Pictures);
        Assert.All(front, id => Assert.Contains(partial.Warnings, w => w.Contains($"'{id}'", StringComparison.Ordinal)));
        Assert.DoesNotContain("STUB-CELL:someone-else", partial.Html);
    }

    [Fact]
    public void Failures_are_grouped_by_their_reason_kind_never_by_the_wording_of_the_reason()
    {
        // Issue 10: rewording a message must not regroup the report. Two records share a kind with
        // different wordings; two share a wording with different kinds; one old record has no kind.
        var lines = new[]
        {
            """{"id":"a","status":"broken","reason":"the cell is dead (wording one)","reason_kind":"dead cell"}""",
            """{"id":"b","status":"broken","reason":"no path from input to output (wording two)","reason_kind":"dead cell"}""",
            """{"id":"c","status":"over_budget","reason":"same words","reason_kind":"over --max-params"}""",
            """{"id":"d","status":"over_budget","reason":"same words","reason_kind":"over --max-macs"}""",
            """{"id":"e","status":"invalid","reason":"some problem"}""",
            """{"id":"f","status":"ok","reason":null,"reason_kind":null,"params":10,"macs":20}""",
        };
        var results = run.Folder.Write("kinds.jsonl", string.Join("\n", lines) + "\n");
        var report = HtmlReport.Build(results, new ReportOptions());
        var kinds = report.Summary.TopReasons(10).ToDictionary(r => r.Kind, r => r.Count);
        Assert.Equal(new Dictionary<string, long>
        {
            ["dead cell"] = 2, ["over --max-params"] = 1, ["over --max-macs"] = 1, ["invalid"] = 1,
        }.OrderBy(kv => kv.Key, StringComparer.Ordinal), kinds.OrderBy(kv => kv.Key, StringComparer.Ordinal));
    }

    [GeneratedRegex("<svg\\b[^>]*>")]
    private static partial Regex SvgTag();

    [GeneratedRegex("<tr data-id=\"([^\"]*)\"")]
    private static partial Regex RowTag();
}
