namespace CellCompiler.Reporting;

/// <summary>Everything one report page shows, gathered before the page is written.</summary>
public sealed record ReportPage(
    string Title,
    string ResultsName,
    string? GenotypesPath,
    bool NoDrawer,
    ResultsSummary Summary,
    IReadOnlyList<ResultRow> Rows,
    bool TableCapped,
    IReadOnlyList<ReportChart> Charts,
    IReadOnlyDictionary<string, CellPicture>? Pictures,
    ScoreJoin? Scores,
    ReportOptions Options)
{
    /// <summary>The fronts the charts show that have members, in chart order, each once.</summary>
    public IReadOnlyList<FrontSpec> Fronts { get; } =
        Charts.Select(c => c.Front).OfType<FrontSpec>().Where(f => f.Count > 0).Distinct().ToList();
}

/// <summary>How the scores file joined the records: its name, its metrics, and its ids that no record has.</summary>
public sealed record ScoreJoin(string Name, IReadOnlyList<string> Metrics, int Count, IReadOnlyList<string> NotInResults, int NotInResultsCount);
