using System.Text.RegularExpressions;
using CellCompiler.Reporting;
using CellCompiler.Tests.Support;

namespace CellCompiler.Tests;

/// <summary>
/// The report's predicted-against-measured chart (issue 12): present exactly when some record holds
/// both `latency_ms` and `latency_predicted_ms`, drawn with the identity line and the +-10% band, and
/// captioned with the share of candidates inside the band (counted here by hand from the records).
/// </summary>
public sealed class PredictionChartTests : IDisposable
{
    private readonly TempFolder _folder = new();

    public void Dispose() => _folder.Dispose();

    private ReportResult Report(params string[] lines) =>
        HtmlReport.Build(_folder.Write($"r{Guid.NewGuid():N}.jsonl", string.Join("\n", lines) + "\n"), new ReportOptions());

    private static string Record(string id, double? measured, double? predicted) =>
        $$"""{"id":"{{id}}","status":"ok","params":{{1000 + id.Length}},"macs":{{20000 + id.Length}}""" +
        (measured is { } m ? $",\"latency_ms\":{m.ToString(System.Globalization.CultureInfo.InvariantCulture)}" : "") +
        (predicted is { } p ? $",\"latency_predicted_ms\":{p.ToString(System.Globalization.CultureInfo.InvariantCulture)}" : "") + "}";

    private static string? Figure(string html) =>
        Regex.Match(html, "<figure class=\"chart-card[^\"]*\"[^>]*aria-labelledby=\"" + PredictionChart.Id + "-title\".*?</figure>", RegexOptions.Singleline) is { Success: true } m
            ? m.Value : null;

    [Fact]
    public void With_both_figures_the_chart_shows_the_identity_line_the_band_and_the_share_inside_it()
    {
        // Errors: +5% and -7.5% inside the band; +25% and +12% outside: 2 of 4 inside.
        var report = Report(Record("a", 1.0, 1.05), Record("bb", 2.0, 2.5), Record("ccc", 4.0, 3.7), Record("dddd", 0.5, 0.56));
        var figure = Figure(report.Html);
        Assert.NotNull(figure);
        Assert.Contains("4 candidates with both", figure);
        Assert.Contains("(50% of them)", figure);
        Assert.Contains("predicted = measured", figure);
        Assert.Contains("±10%", figure);
        Assert.Contains("calibrated", figure);
        Assert.Contains("<svg", figure);
    }

    [Fact]
    public void Without_both_figures_on_one_record_there_is_no_such_chart()
    {
        var measuredOnly = Report(Record("a", 1.0, null), Record("bb", 2.0, null));
        var predictedOnly = Report(Record("a", null, 1.0), Record("bb", null, 2.0));
        // Each record holds one of the two: still nothing to compare.
        var apart = Report(Record("a", 1.0, null), Record("bb", null, 2.0));
        foreach (var report in new[] { measuredOnly, predictedOnly, apart })
        {
            Assert.Null(Figure(report.Html));
            Assert.DoesNotContain(PredictionChart.Id, report.Html);
        }
        // The measured-latency charts are there when latency was measured, so the absence is specific.
        Assert.Contains("chart-latency-macs", measuredOnly.Html);
    }

    [Fact]
    public void The_predicted_budget_is_drawn_under_its_own_option()
    {
        var budgets = ""","budgets":{"max_params":null,"max_macs":null,"max_activation_mb":null,"max_train_memory_gb":null,"max_latency_ms":null,"max_predicted_latency_ms":3}""";
        var report = Report(Record("a", 1.0, 1.05)[..^1] + budgets + "}", Record("bb", 2.0, 2.5)[..^1] + budgets + "}");
        var figure = Figure(report.Html);
        Assert.NotNull(figure);
        Assert.Contains("data-budgets=\"--max-predicted-latency-ms\"", figure);
    }
}
