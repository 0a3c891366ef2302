using CellCompiler.Screening;

namespace CellCompiler.Reporting;

/// <summary>
/// Reads `cellc check --json` output one record at a time through the one record reader
/// (<see cref="CheckRecordJson"/>), never the whole file, joining each record with its scores. A line
/// that is not a record is handed to the caller as a <see cref="MalformedLine"/> with its file:line
/// and skipped; blank lines are skipped silently.
/// </summary>
public static class ResultsReader
{
    public static IEnumerable<ResultRow> ReadFile(string path, Action<MalformedLine> malformed,
        ScoreTable? scores = null, IReadOnlyList<Objective>? objectives = null) =>
        CheckRecordJson.ReadFile(path, malformed).Select(r => ResultRow.From(r, scores, objectives));

    public static IEnumerable<ResultRow> Read(Stream results, string origin, Action<MalformedLine> malformed,
        ScoreTable? scores = null, IReadOnlyList<Objective>? objectives = null) =>
        CheckRecordJson.Read(results, origin, malformed).Select(r => ResultRow.From(r, scores, objectives));
}
