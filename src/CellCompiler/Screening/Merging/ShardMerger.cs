using CellCompiler.Input;
using CellCompiler.Io;

namespace CellCompiler.Screening.Merging;

/// <summary>
/// `cellc merge`: joins the JSON Lines outputs of `cellc check --shard K/N` runs into one file and
/// finds ids that are missing (with a population), duplicated, or lines that are not records.
/// </summary>
/// <remarks>
/// The work is split by concern: <see cref="PopulationIds"/> gives the expected ids,
/// <see cref="ShardScan"/> reads the shards once (one line at a time, through the one JSON Lines
/// splitter and the one record reader), <see cref="RecordCopier"/> writes the records in population
/// order when there is one, and <see cref="AtomicFile"/> makes the output appear whole or not at all.
/// Kept lines are copied byte for byte, each ended by "\n" ("\r\n" becomes "\n", a byte order mark at
/// a file's start is dropped). Unreadable or missing inputs are an <see cref="InputException"/>
/// naming the file (nothing is written); failures to write are an <see cref="OutputException"/>.
/// </remarks>
public static class ShardMerger
{
    public static MergeReport Merge(string output, IReadOnlyList<string> shards, string? population)
    {
        ArgumentNullException.ThrowIfNull(output);
        ArgumentNullException.ThrowIfNull(shards);
        if (shards.Count == 0) throw new ArgumentException("at least one shard file is needed", nameof(shards));

        // Every input is checked before anything is written, so a typo never costs the output.
        var outputFull = Path.GetFullPath(output);
        foreach (var input in population is null ? shards : shards.Append(population))
        {
            RequireReadable(input);
            if (Path.GetFullPath(input) == outputFull)
                throw new InputException(input, "", "is also the output file; the merged output must be a different file");
        }

        List<string>? expectedOrder = null;
        HashSet<string>? expected = null;
        List<string> populationDuplicates = [];
        if (population is not null)
        {
            expectedOrder = [];
            expected = new HashSet<string>(StringComparer.Ordinal);
            foreach (var id in PopulationIds.ReadFile(population))
            {
                if (expected.Add(id)) expectedOrder.Add(id);
                else populationDuplicates.Add(id);
            }
        }

        return AtomicFile.Write(output, sink =>
        {
            var scan = new ShardScan(shards, expectedOrder is null ? sink : null);
            for (var file = 0; file < shards.Count; file++)
                scan.ReadShard(file);

            List<string> missing = [];
            List<string> unexpected = [];
            var records = scan.Kept;
            if (expectedOrder is not null)
            {
                var order = new List<RecordPlace>(scan.Index.Count);
                foreach (var id in expectedOrder)
                {
                    if (scan.Index.TryGetValue(id, out var place)) order.Add(place);
                    else missing.Add(id);
                }
                foreach (var id in scan.FoundOrder)
                {
                    if (expected!.Contains(id)) continue;
                    unexpected.Add(id);
                    order.Add(scan.Index[id]);
                }
                records = RecordCopier.Copy(shards, scan.Lengths, order, sink);
            }
            return new MergeReport(output, population, records, expectedOrder?.Count, scan.Counts, missing,
                scan.Duplicates, scan.Malformed, scan.MalformedCount, scan.Partial, unexpected, populationDuplicates);
        });
    }

    private static void RequireReadable(string path)
    {
        if (path == "-") throw new InputException("-", "", "standard input cannot be merged; give a file");
        if (Directory.Exists(path)) throw new InputException(path, "", "is a folder, not a file");
        if (!File.Exists(path)) throw new InputException(path, "", "file not found");
        try { File.OpenHandle(path, FileMode.Open, FileAccess.Read, FileShare.ReadWrite | FileShare.Delete).Dispose(); }
        catch (Exception e) when (e is IOException or UnauthorizedAccessException)
        {
            throw new InputException(path, "", $"cannot read the file: {e.Message}");
        }
    }
}
