using System.Text;
using CellCompiler.Input;
using CellCompiler.Screening;

namespace CellCompiler.Reporting;

/// <summary>A built report: the HTML page, the totals it shows, the fronts it lists, and what the caller should tell the user.</summary>
public sealed record ReportResult(string Html, ResultsSummary Summary, int TableRows, bool TableCapped, int Pictures,
    IReadOnlyList<FrontSpec> Fronts, IReadOnlyList<string> Warnings)
{
    public byte[] Utf8() => new UTF8Encoding(encoderShouldEmitUTF8Identifier: false).GetBytes(Html);

    /// <summary>Every candidate on a listed front, each once, in the order the page lists them.</summary>
    public IReadOnlyList<string> FrontIds => Fronts.SelectMany(f => f.Members).Select(m => m.Id).Distinct(StringComparer.Ordinal).ToList();
}

/// <summary>
/// `cellc report`: one self-contained HTML page from `cellc check --json` output. The scores file (if
/// any) is read whole first; the results file is streamed once, each record joined with its scores
/// by id: the totals, fronts and chart figures are kept for every record, the table rows up to
/// <see cref="ReportOptions.TableRowLimit"/>. With a population file and a cell drawer, the cells of
/// every front shown are drawn. The page loads nothing: styles, script and charts (inline SVG) are in
/// the file. Ids that do not join (scores without a record, records without scores) are reported,
/// never dropped silently.
/// </summary>
public static class HtmlReport
{
    public static ReportResult Build(string resultsPath, ReportOptions options)
    {
        var scores = options.ScoresPath is { } path ? ScoreTable.Read(path) : null;
        var summary = new ResultsSummary(options.Objectives, options.IncludeTrivial);
        var table = Gather(ResultsReader.ReadFile(resultsPath, summary.AddMalformed, scores, options.Objectives), summary, scores, options);
        return Build(resultsPath, summary, table, scores, options);
    }

    public static ReportResult Build(Stream results, string resultsName, ReportOptions options)
    {
        var scores = options.ScoresPath is { } path ? ScoreTable.Read(path) : null;
        var summary = new ResultsSummary(options.Objectives, options.IncludeTrivial);
        var table = Gather(ResultsReader.Read(results, resultsName, summary.AddMalformed, scores, options.Objectives), summary, scores, options);
        return Build(resultsName, summary, table, scores, options);
    }

    private static CandidateTable Gather(IEnumerable<ResultRow> rows, ResultsSummary summary, ScoreTable? scores, ReportOptions options)
    {
        var table = new CandidateTable(options.TableRowLimit);
        foreach (var row in rows)
        {
            summary.Add(row, scores is null ? null : row.HasScores);
            table.Add(row);
        }
        return table;
    }

    private static ReportResult Build(string resultsName, ResultsSummary summary, CandidateTable table, ScoreTable? scores, ReportOptions options)
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
        CheckObjectives(summary, scores);

        ScoreJoin? join = null;
        if (scores is not null)
        {
            join = new ScoreJoin(Path.GetFileName(scores.Origin), scores.Metrics, scores.Count,
                scores.NotJoined.Take(ResultsSummary.UnjoinedListed).ToList(), scores.NotJoinedCount);
            if (join.NotInResultsCount > 0)
                warnings.Add($"{scores.Origin}: {join.NotInResultsCount:N0} {(join.NotInResultsCount == 1 ? "id has" : "ids have")} scores but no record in {resultsName}: " +
                    IdList(join.NotInResults, join.NotInResultsCount));
            if (summary.UnscoredTotal > 0)
                warnings.Add($"{resultsName}: {summary.UnscoredTotal:N0} {(summary.UnscoredTotal == 1 ? "record has" : "records have")} no score in {scores.Origin} " +
                    $"({string.Join(", ", CheckStatusNames.All.Where(s => summary.Unscored(s) > 0).Select(s => $"{s.Name()} {summary.Unscored(s):N0}"))})" +
                    (summary.UnscoredOk.Count > 0 ? $"; ok ones: {IdList(summary.UnscoredOk, summary.Unscored(CheckStatus.Ok))}" : ""));
        }
        if (summary.BudgetSets > 1)
            warnings.Add($"{resultsName}: the records carry {summary.BudgetSets} different sets of budgets (results of several runs?); the charts draw the most common");

        var charts = ChartPlan.For(summary, options.ScatterPointLimit);
        var fronts = charts.Select(c => c.Front).OfType<FrontSpec>().Where(f => f.Count > 0).Distinct().ToList();
        var frontIds = fronts.SelectMany(f => f.Members).Select(m => m.Id).Distinct(StringComparer.Ordinal).ToList();

        IReadOnlyDictionary<string, CellPicture>? pictures = null;
        if (options.GenotypesPath is { } population && options.DrawCell is { } draw)
        {
            pictures = CellPictures.Draw(population, frontIds, draw);
            foreach (var id in frontIds)
            {
                if (!pictures.TryGetValue(id, out var picture))
                    warnings.Add($"{population}: no genotype with id '{id}' (a Pareto-front candidate); its cell is not drawn");
                else if (picture.Problem is { } problem)
                    warnings.Add($"{id}: {problem}");
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
            charts,
            pictures,
            join,
            options);
        var writer = new StringWriter { NewLine = "\n" };
        HtmlReportWriter.Write(writer, page);
        return new ReportResult(writer.ToString(), summary, rows.Count, table.Capped,
            pictures?.Values.Count(p => p.Svg is not null) ?? 0, page.Fronts, warnings);
    }

    /// <summary>An objective no candidate has a value for is a mistake in the command line (a misspelt metric, say).</summary>
    private static void CheckObjectives(ResultsSummary summary, ScoreTable? scores)
    {
        for (var i = 0; i < summary.Objectives.Count; i++)
        {
            if (summary.WithObjective(i) > 0) continue;
            var name = summary.Objectives[i].Name;
            var known = scores is null ? "no --scores file was given" : $"the scores' metrics are {string.Join(", ", scores.Metrics)}";
            throw new InputException("command line", "--objective",
                $"no candidate with figures has a number named '{name}' in the scores or in its record's meta ({known})");
        }
    }

    private static string IdList(IReadOnlyList<string> ids, long total) =>
        string.Join(", ", ids) + (total > ids.Count ? $" and {total - ids.Count:N0} more" : "");
}
