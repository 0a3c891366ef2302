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
    IReadOnlyDictionary<string, CellPicture>? Pictures,
    ReportOptions Options);
