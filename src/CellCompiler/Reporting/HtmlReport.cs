using System.Text;
using CellCompiler.Input;

namespace CellCompiler.Reporting;

/// <summary>A built report: the HTML page, the totals it shows, and what the caller should tell the user.</summary>
public sealed record ReportResult(string Html, ResultsSummary Summary, int TableRows, bool TableCapped, int Pictures,
    IReadOnlyList<string> Warnings)
{
    public byte[] Utf8() => new UTF8Encoding(encoderShouldEmitUTF8Identifier: false).GetBytes(Html);
}

/// <summary>
/// `cellc report`: one self-contained HTML page from `cellc check --json` output. The results file is
/// streamed once: the totals, fronts and chart figures are kept for every record, the table rows up to
/// <see cref="ReportOptions.TableRowLimit"/>. With a population file and a cell drawer, the cells of the
/// Pareto front (params vs MACs) are drawn. The page loads nothing: styles, script and charts (inline
/// SVG) are in the file.
/// </summary>
public static class HtmlReport
{
    public static ReportResult Build(string resultsPath, ReportOptions options)
    {
        var summary = new ResultsSummary();
        var table = new CandidateTable(options.TableRowLimit);
        foreach (var row in ResultsReader.ReadFile(resultsPath, summary.AddMalformed))
        {
            summary.Add(row);
            table.Add(row);
        }
        return Build(resultsPath, summary, table, options);
    }

    public static ReportResult Build(Stream results, string resultsName, ReportOptions options)
    {
        var summary = new ResultsSummary();
        var table = new CandidateTable(options.TableRowLimit);
        foreach (var row in ResultsReader.Read(results, resultsName, summary.AddMalformed))
        {
            summary.Add(row);
            table.Add(row);
        }
        return Build(resultsName, summary, table, options);
    }

    private static ReportResult Build(string resultsName, ResultsSummary summary, CandidateTable table, ReportOptions options)
    {
        var warnings = new List<string>();
        foreach (var line in summary.Malformed)
            warnings.Add($"{line.Place}: not a check record, skipped: {line.Problem}");
        if (summary.MalformedCount > summary.Malformed.Count)
            warnings.Add($"... and {summary.MalformedCount - summary.Malformed.Count:N0} more lines that are not check records");
        if (summary.Total == 0)
        {
            var first = summary.Malformed.Count > 0
                ? $"; {summary.MalformedCount:N0} lines are not records, the first: {summary.Malformed[0].Place}: {summary.Malformed[0].Problem}"
                : "";
            throw new InputException(resultsName, "",
                $"no check records found (expected the JSON Lines output of `cellc check --json`, one record per line{first})");
        }

        IReadOnlyDictionary<string, CellPicture>? pictures = null;
        var front = summary.ParamsVsMacs.Points;
        if (options.GenotypesPath is { } population && options.DrawCell is { } draw)
        {
            pictures = CellPictures.Draw(population, front.Select(p => p.Id).ToList(), draw);
            foreach (var point in front)
            {
                if (!pictures.TryGetValue(point.Id, out var picture))
                    warnings.Add($"{population}: no genotype with id '{point.Id}' (a Pareto-front candidate); its cell is not drawn");
                else if (picture.Problem is { } problem)
                    warnings.Add($"{point.Id}: {problem}");
            }
        }

        var rows = table.Rows();
        var page = new ReportPage(
            options.Title ?? $"Screening report: {Path.GetFileName(resultsName)}",
            resultsName,
            options.GenotypesDisplayName ?? options.GenotypesPath,
            options.GenotypesPath is not null && options.DrawCell is null,
            summary,
            rows,
            table.Capped,
            pictures,
            options);
        var writer = new StringWriter { NewLine = "\n" };
        HtmlReportWriter.Write(writer, page);
        return new ReportResult(writer.ToString(), summary, rows.Count, table.Capped,
            pictures?.Values.Count(p => p.Svg is not null) ?? 0, warnings);
    }
}
