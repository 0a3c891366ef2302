using CellCompiler.Io;

namespace CellCompiler.Screening.Merging;

/// <summary>A later record of an id already kept: <see cref="First"/> is the kept one.</summary>
public sealed record DuplicateRecord(string Id, LinePlace First, LinePlace Again);

/// <summary>
/// A last line without its newline: a write cut short by a killed process. Skipped, never copied.
/// <see cref="Id"/> is set when the bytes happen to parse as a whole record all the same.
/// </summary>
public sealed record PartialLine(LinePlace Place, long Bytes, string? Id);

/// <summary>What one shard file held.</summary>
public sealed record ShardCounts(string File, long Lines, long Kept, long Duplicates, long Malformed, long Partial, long Blank);

/// <summary>The result of <see cref="ShardMerger.Merge"/>; the output file is written whatever it holds.</summary>
public sealed record MergeReport(
    string Output,
    string? Population,
    long Records,
    long? Expected,
    IReadOnlyList<ShardCounts> Shards,
    IReadOnlyList<string> Missing,
    IReadOnlyList<DuplicateRecord> Duplicates,
    IReadOnlyList<MalformedLine> Malformed,
    long MalformedCount,
    IReadOnlyList<PartialLine> Partial,
    IReadOnlyList<string> Unexpected,
    IReadOnlyList<string> PopulationDuplicates)
{
    /// <summary>
    /// Nothing missing, duplicated, malformed, cut short or unexpected. A cut last line counts as a
    /// problem: it is a record that a killed shard run lost (the only sign of it without a population).
    /// </summary>
    public bool Clean =>
        Missing.Count == 0 && Duplicates.Count == 0 && MalformedCount == 0 && Partial.Count == 0 && Unexpected.Count == 0
        && PopulationDuplicates.Count == 0;
}
