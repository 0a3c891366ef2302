using System.Globalization;
using System.Text.Json;
using System.Text.RegularExpressions;
using CellCompiler.Reporting;
using CellCompiler.Screening;
using CellCompiler.Tests.Support;

namespace CellCompiler.Tests;

/// <summary>
/// A small population screened by the real `cellc check` with budgets and latency: a trivial cell (no
/// trainable op), working cells carrying a `meta` object, and a dead cell. The budget on params is
/// chosen from a first run so that some cells are over it. Scores for the report tests are written
/// beside it: every ok cell but one, and an id that no record has.
/// </summary>
public sealed class ScoredPopulation : IDisposable
{
    public TempFolder Folder { get; } = new();

    public static readonly string[] Lines =
    [
        """{"id":"t-trivial","format":"genotype/1","levels":[{"nodes":3,"motifs":{"cell":{"edges":[[0,1,"maxpool3x3"],[1,2,"identity"]]}}}]}""",
        """{"id":"c-small","format":"genotype/1","meta":{"proxy_acc":0.61},"levels":[{"nodes":3,"motifs":{"cell":{"edges":[[0,1,"conv1x1"],[1,2,"identity"]]}}}]}""",
        """{"id":"c-mid","format":"genotype/1","meta":{"proxy_acc":0.70},"levels":[{"nodes":3,"motifs":{"cell":{"edges":[[0,1,"conv3x3"],[1,2,"conv1x1"]]}}}]}""",
        """{"id":"c-sep","format":"genotype/1","meta":{"proxy_acc":0.66},"levels":[{"nodes":3,"motifs":{"cell":{"edges":[[0,1,"sepconv3x3"],[1,2,"conv1x1"],[0,2,"dwconv3x3"]]}}}]}""",
        """{"id":"c-wide","format":"genotype/1","meta":{"proxy_acc":0.79},"levels":[{"nodes":4,"motifs":{"cell":{"edges":[[0,1,"conv3x3"],[1,2,"conv3x3"],[2,3,"conv3x3"],[0,3,"conv1x1"]]}}}]}""",
        """{"id":"c-big","format":"genotype/1","meta":{"proxy_acc":0.83},"levels":[{"nodes":5,"motifs":{"cell":{"edges":[[0,1,"conv3x3"],[1,2,"conv3x3"],[2,3,"conv3x3"],[3,4,"conv3x3"],[0,4,"conv3x3"]]}}}]}""",
        """{"id":"c-dead","format":"genotype/1","levels":[{"nodes":3,"motifs":{"cell":{"edges":[[0,1,"conv3x3"]]}}}]}""",
    ];

    public ScoredPopulation()
    {
        Population = Folder.Write("population.jsonl", string.Join("\n", Lines) + "\n");
        var first = Check("first.jsonl");
        // A params budget that the four smallest cells meet and the two wide ones exceed.
        var parameters = ReportScoresTests.Records(first).ToDictionary(r => r.Id, r => r.Params);
        MaxParams = new[] { "t-trivial", "c-small", "c-mid", "c-sep" }.Max(id => parameters[id]!.Value);
        Assert.True(parameters["c-wide"] > MaxParams && parameters["c-big"] > MaxParams, "the wide cells should be over the budget");
        Results = Check("results.jsonl", "--max-params", MaxParams.ToString(CultureInfo.InvariantCulture), "--latency", "--runs", "3", "--warmup", "1");
        var terminal = ProcessRunner.Cellc(["check", Population, "--ordered", "--no-cache", "--max-params", MaxParams.ToString(CultureInfo.InvariantCulture)], null, Folder.Path);
        Terminal = terminal.Stdout + terminal.Stderr;

        var records = ReportScoresTests.Records(Results);
        var accuracy = new Dictionary<string, double> { ["t-trivial"] = 0.10, ["c-small"] = 0.58, ["c-mid"] = 0.72, ["c-wide"] = 0.71, ["c-big"] = 0.86 };
        Unscored = records.Single(r => r.Status == "ok" && r.Id != "t-trivial" && !accuracy.ContainsKey(r.Id)).Id;
        Scores = Folder.Write("scores.jsonl", string.Join("\n",
            accuracy.Select(a => $"{{\"id\":\"{a.Key}\",\"accuracy\":{a.Value.ToString(CultureInfo.InvariantCulture)},\"loss\":{(1 - a.Value).ToString(CultureInfo.InvariantCulture)}}}")
                .Append("{\"id\":\"ghost-9\",\"accuracy\":0.99}")) + "\n");
        Accuracy = accuracy;
    }

    public string Population { get; }
    public long MaxParams { get; }
    public string Results { get; }
    public string Scores { get; }
    public string Terminal { get; }
    public string Unscored { get; }
    public IReadOnlyDictionary<string, double> Accuracy { get; }

    private string Check(string name, params string[] more)
    {
        var result = ProcessRunner.Cellc(["check", Population, "--json", "--ordered", "--no-cache", .. more], null, Folder.Path);
        Assert.True(result.ExitCode == 1, $"cellc check exited {result.ExitCode}: {result.Stderr}");
        return Folder.Write(name, result.Stdout);
    }

    public void Dispose() => Folder.Dispose();
}

/// <summary>
/// `cellc report --scores --objective` (issue 11, section 2), budgets as lines and trivial cells
/// (issue 14, section 3), through the real process. Expected fronts are computed here on their own
/// (a candidate is on the front when no other ok candidate is at least as good on both figures and
/// better on one; of equal figures the first in the file), never by the library's ParetoFront.
/// </summary>
public sealed partial class ReportScoresTests(ScoredPopulation run) : IClassFixture<ScoredPopulation>
{
    internal sealed record Rec(string Id, string Status, long? Params, long? Macs, double? Latency, bool Trivial, double? ProxyAcc, string? ReasonKind, JsonElement? Budgets);

    internal static List<Rec> Records(string path) =>
        File.ReadLines(path).Where(l => l.Trim().Length > 0).Select(line =>
        {
            var r = JsonDocument.Parse(line).RootElement.Clone();
            long? Whole(string name) => r.TryGetProperty(name, out var v) && v.ValueKind == JsonValueKind.Number ? v.GetInt64() : null;
            double? latency = r.TryGetProperty("latency_ms", out var l) && l.ValueKind == JsonValueKind.Number ? l.GetDouble() : null;
            var trivial = r.TryGetProperty("notes", out var notes) && notes.EnumerateArray().Any(n => n.GetString() == "trivial-cell");
            double? acc = r.TryGetProperty("meta", out var meta) && meta.TryGetProperty("proxy_acc", out var a) ? a.GetDouble() : null;
            string? kind = r.TryGetProperty("reason_kind", out var k) && k.ValueKind == JsonValueKind.String ? k.GetString() : null;
            JsonElement? budgets = r.TryGetProperty("budgets", out var b) ? b : null;
            return new Rec(r.GetProperty("id").GetString()!, r.GetProperty("status").GetString()!, Whole("params"), Whole("macs"), latency, trivial, acc, kind, budgets);
        }).ToList();

    /// <summary>The front, computed here: x and y to minimise (negate a maximised one), non-dominated, first of equals, by x.</summary>
    internal static List<string> Front(IEnumerable<(string Id, double X, double Y)> points)
    {
        var all = points.ToList();
        var kept = all.Where((p, i) =>
            !all.Any(q => q.X <= p.X && q.Y <= p.Y && (q.X < p.X || q.Y < p.Y))
            && !all.Take(i).Any(q => q.X == p.X && q.Y == p.Y)).ToList();
        return kept.OrderBy(p => p.X).ThenBy(p => p.Y).Select(p => p.Id).ToList();
    }

    private (string Html, ProcessResult Result) Report(string name, params string[] more)
    {
        var output = run.Folder.File(name);
        var result = ProcessRunner.Cellc(["report", run.Results, "-o", output, .. more], null, run.Folder.Path);
        Assert.True(result.ExitCode == 0, $"cellc report exited {result.ExitCode}: {result.Stderr}");
        return (File.ReadAllText(output), result);
    }

    private static List<string> Listed(string html, string front)
    {
        var table = Regex.Match(html, $"<table class=\"front-list\" data-front=\"{Regex.Escape(front)}\">(.*?)</table>", RegexOptions.Singleline);
        Assert.True(table.Success, $"the front {front} is not listed");
        return Regex.Matches(table.Groups[1].Value, "<tr data-id=\"([^\"]+)\"").Select(m => m.Groups[1].Value).ToList();
    }

    [Fact]
    public void Scores_join_by_id_and_the_objective_front_is_charted_listed_drawn_and_a_table_column()
    {
        var (html, result) = Report("scores.html", "--scores", run.Scores, "--objective", "accuracy:max", "--genotypes", run.Population);
        var records = Records(run.Results);

        // The front of accuracy (max) against params, of the ok, non-trivial candidates with a score.
        var expected = Front(records.Where(r => r.Status == "ok" && !r.Trivial && run.Accuracy.ContainsKey(r.Id))
            .Select(r => (r.Id, (double)r.Params!.Value, -run.Accuracy[r.Id])));
        Assert.NotEmpty(expected);
        Assert.Equal(expected, Listed(html, "objective-0-params"));
        foreach (var cost in new[] { "params", "macs", "latency" })
        {
            Assert.Matches($"<figure class=\"chart-card\"[^>]*data-front=\"objective-0-{cost}\"", html);
            Assert.Contains($"id=\"chart-objective-0-{cost}\"", html);
            // Every member of a charted front has a card with its cell drawn.
            foreach (var id in Listed(html, $"objective-0-{cost}"))
                Assert.Matches($"<article class=\"front-card drawn\"[^>]*data-id=\"{Regex.Escape(id)}\"[^>]*data-fronts=\"[^\"]*objective-0-{cost}", html);
        }
        // The metric is a sortable column with each candidate's value.
        Assert.Contains("<th scope=\"col\" data-type=\"num\" class=\"num objective\"", html);
        Assert.Contains(">accuracy</button>", html);
        foreach (var (id, value) in run.Accuracy)
            Assert.Matches($"<tr data-id=\"{Regex.Escape(id)}\".*?data-v=\"{Regex.Escape(value.ToString("R", CultureInfo.InvariantCulture))}\"", html);

        // Ids on one side only are reported on the page and on stderr, not dropped.
        Assert.Matches("id=\"scores-without-record\">[^<]*<code>ghost-9</code>", html);
        Assert.Contains($"<code>{run.Unscored}</code>", Regex.Match(html, "<li id=\"records-without-score\">.*?</li>").Value);
        Assert.Contains("ghost-9", result.Stderr);
        Assert.Contains(run.Unscored, result.Stderr);
    }

    [Fact]
    public void A_numeric_meta_field_serves_as_an_objective_to_minimise_or_maximise()
    {
        var records = Records(run.Results).Where(r => r.Status == "ok" && !r.Trivial && r.ProxyAcc is not null).ToList();
        var (max, _) = Report("meta-max.html", "--objective", "proxy_acc");
        Assert.Equal(Front(records.Select(r => (r.Id, (double)r.Macs!.Value, -r.ProxyAcc!.Value))), Listed(max, "objective-0-macs"));
        var (min, _) = Report("meta-min.html", "--objective", "proxy_acc:min");
        Assert.Equal(Front(records.Select(r => (r.Id, (double)r.Macs!.Value, r.ProxyAcc!.Value))), Listed(min, "objective-0-macs"));
    }

    [Fact]
    public void Trivial_cells_are_left_out_of_the_fronts_by_default_and_kept_with_the_switch()
    {
        var records = Records(run.Results);
        Assert.Contains(records, r => r.Id == "t-trivial" && r.Trivial && r.Status == "ok");

        var (plain, _) = Report("trivial-out.html");
        foreach (var front in new[] { "params-macs", "params-latency", "macs-latency" })
            Assert.DoesNotContain("t-trivial", Listed(plain, front));
        Assert.Contains("id=\"trivial-left-out\"", plain);
        Assert.Equal(Front(records.Where(r => r.Status == "ok" && !r.Trivial).Select(r => (r.Id, (double)r.Params!.Value, (double)r.Macs!.Value))),
            Listed(plain, "params-macs"));

        var (kept, _) = Report("trivial-in.html", "--include-trivial");
        Assert.Equal(Front(records.Where(r => r.Status == "ok").Select(r => (r.Id, (double)r.Params!.Value, (double)r.Macs!.Value))),
            Listed(kept, "params-macs"));
        Assert.Contains("t-trivial", Listed(kept, "params-macs"));
    }

    [Fact]
    public void The_runs_budgets_are_recorded_and_drawn_as_labelled_lines()
    {
        var records = Records(run.Results);
        // check writes the budgets into every record.
        Assert.All(records, r => Assert.Equal(run.MaxParams, r.Budgets!.Value.GetProperty("max_params").GetInt64()));

        var (html, _) = Report("budgets.html");
        var label = $"--max-params {run.MaxParams:N0}";
        foreach (var chart in new[] { "chart-params-macs", "chart-params-latency", "chart-params-hist" })
        {
            var figure = Regex.Match(html, $"<figure[^>]*data-budgets=\"([^\"]*)\">\\s*<figcaption><strong id=\"{chart}-title\".*?</figure>", RegexOptions.Singleline);
            Assert.True(figure.Success, $"no {chart}");
            Assert.Contains("--max-params", figure.Groups[1].Value);
            Assert.Contains(label, figure.Value);
            Assert.Contains("stroke:var(--ink-budget)", figure.Value);
        }
        // MACs against latency has no params budget to draw.
        Assert.Matches("<figure[^>]*data-budgets=\"\">\\s*<figcaption><strong id=\"chart-latency-macs-title\"", html);
        Assert.Contains(label, Regex.Match(html, "<p class=\"budgets\" id=\"budgets\">.*?</p>").Value.Replace("<code>", "").Replace("</code>", ""));
    }

    [Fact]
    public void Statuses_and_reasons_are_spelt_as_records_and_the_terminal_spell_them()
    {
        var records = Records(run.Results);
        var (html, _) = Report("spelling.html");
        // Statuses as the records write them: over_budget, never "over budget", in tiles, badges and chart legends.
        Assert.Contains("<span class=\"badge s-over_budget\">over_budget</span>", html);
        Assert.Contains("<span class=\"tile-label\">over_budget</span>", html);
        Assert.DoesNotMatch(">\\s*over budget\\s*<", html);
        Assert.Contains(">over_budget</text>", html);
        // Reason kinds exactly as the record's reason_kind and the terminal summary give them.
        var reasons = Regex.Match(html, "<ol class=\"reasons\" id=\"top-reasons\">(.*?)</ol>", RegexOptions.Singleline).Groups[1].Value;
        foreach (var kind in records.Select(r => r.ReasonKind).OfType<string>().Distinct())
        {
            Assert.Contains($"<span class=\"kind\">{System.Net.WebUtility.HtmlEncode(kind)}</span>", reasons);
            Assert.Contains(kind, run.Terminal);
        }
    }

    public static TheoryData<string, string, string> BadScores() => new()
    {
        { "not json\n", "line 1", "not valid JSON" },
        { "{\"id\":\"c-mid\",\"accuracy\":0.7}\n[1,2]\n", "line 2", "expected a JSON object" },
        { "{\"accuracy\":0.7}\n", "line 1", "no 'id' field" },
        { "{\"id\":7,\"accuracy\":0.7}\n", "line 1: id", "must be a string" },
        { "\n{\"id\":\"c-mid\",\"accuracy\":\"high\"}\n", "line 2: accuracy", "must be a number, found a string" },
        { "{\"id\":\"c-mid\",\"accuracy\":0.7}\n{\"id\":\"c-mid\",\"accuracy\":0.8}\n", "line 2: id", "line 1 already" },
        { "{\"id\":\"c-mid\",\"accuracy\":0.7,\"accuracy\":0.8}\n", "line 1: accuracy", "more than once" },
        { "{\"id\":\"c-mid\"}\n", "line 1", "no metric" },
        { "\n\n", "scores.jsonl", "no scores found" },
    };

    [Theory]
    [MemberData(nameof(BadScores))]
    public void A_bad_scores_file_is_exit_2_naming_file_line_and_problem_and_writes_nothing(string content, string place, string problem)
    {
        using var folder = new TempFolder();
        var scores = folder.Write("scores.jsonl", content);
        var output = folder.File("report.html");
        var result = ProcessRunner.Cellc(["report", run.Results, "-o", output, "--scores", scores, "--objective", "accuracy"], null, folder.Path);
        Assert.Equal(2, result.ExitCode);
        Assert.Contains("scores.jsonl", result.Stderr);
        Assert.Contains(place, result.Stderr);
        Assert.Contains(problem, result.Stderr);
        Assert.DoesNotContain("   at ", result.Stderr);
        Assert.False(File.Exists(output));
    }

    [Theory]
    [InlineData("accuracy:best", "max or min")]
    [InlineData(":max", "names no metric")]
    [InlineData("no_such_metric", "no_such_metric")]
    public void A_bad_objective_is_exit_2_naming_the_option(string objective, string problem)
    {
        using var folder = new TempFolder();
        var output = folder.File("report.html");
        var result = ProcessRunner.Cellc(["report", run.Results, "-o", output, "--scores", run.Scores, "--objective", objective], null, folder.Path);
        Assert.Equal(2, result.ExitCode);
        Assert.Contains("--objective", result.Stderr);
        Assert.Contains(problem, result.Stderr);
        Assert.False(File.Exists(output));
    }

    [Fact]
    public void Records_with_a_predicted_latency_get_a_predicted_against_measured_chart()
    {
        // Records carry no prediction yet (another change adds latency_predicted_ms); the chart is built from rows that hold one.
        var summary = new ResultsSummary();
        foreach (var (id, measured, predicted) in new[] { ("a", 1.0, 1.2), ("b", 2.0, 1.7), ("c", 4.0, 4.4) })
            summary.Add(new ResultRow(id, id, null, CheckStatus.Ok, null, null, 1000, 2000, null, null, null, measured, false)
                { LatencyPredictedMs = predicted, Budgets = new Budgets(MaxLatencyMs: 3) });
        var charts = ChartPlan.For(summary, 100);
        var chart = Assert.Single(charts, c => c.Id == "chart-latency-predicted");
        Assert.Equal(["--max-latency-ms"], chart.Budgets);
        var svg = ChartSvg.Export(chart.Model(), chart.Id, chart.Title);
        Assert.Contains("predicted = measured", svg);
        Assert.Contains("--max-latency-ms 3.00", svg);
        // Without predictions there is no such chart.
        var plain = new ResultsSummary();
        plain.Add(new ResultRow("a", "a", null, CheckStatus.Ok, null, null, 1000, 2000, null, null, null, 1.0, false));
        Assert.DoesNotContain(ChartPlan.For(plain, 100), c => c.Id == "chart-latency-predicted");
    }
}
