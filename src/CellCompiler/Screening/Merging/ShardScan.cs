using CellCompiler.Io;

namespace CellCompiler.Screening.Merging;

/// <summary>Where a kept record sits: shard file index, byte offset and length, line number.</summary>
internal readonly record struct RecordPlace(int File, long Offset, int Length, long Line);

/// <summary>
/// The first pass over the shard files, one line at a time: classifies each line (record, duplicate,
/// malformed, cut last line, blank) and either copies the kept records to the sink at once (no
/// population: shard then line order) or indexes them for <see cref="RecordCopier"/>.
/// </summary>
internal sealed class ShardScan(IReadOnlyList<string> files, Stream? sink)
{
    /// <summary>At most this many malformed lines are kept for the report (all are counted).</summary>
    public const int MaxMalformedListed = 1000;

    public Dictionary<string, RecordPlace> Index { get; } = new(StringComparer.Ordinal);
    /// <summary>Kept ids in the order found (only when indexing, to place the unexpected ones).</summary>
    public List<string> FoundOrder { get; } = [];
    public List<ShardCounts> Counts { get; } = [];
    public List<DuplicateRecord> Duplicates { get; } = [];
    public List<MalformedLine> Malformed { get; } = [];
    public List<PartialLine> Partial { get; } = [];
    public long MalformedCount { get; private set; }
    public long Kept { get; private set; }
    /// <summary>Bytes of each shard as read, to notice a file changing before the second pass.</summary>
    public long[] Lengths { get; } = new long[files.Count];

    private long _lines, _kept, _duplicates, _malformed, _partial, _blank;

    public void ReadShard(int file)
    {
        var path = files[file];
        _lines = _kept = _duplicates = _malformed = _partial = _blank = 0;
        long length = 0;
        foreach (var line in JsonLines.ReadFile(path, CheckRecordJson.MaxLineBytes))
        {
            Line(file, path, line);
            length = line.End;
        }
        Lengths[file] = length;
        Counts.Add(new ShardCounts(path, _lines, _kept, _duplicates, _malformed, _partial, _blank));
    }

    private void Line(int file, string path, JsonLine line)
    {
        _lines++;
        var place = new LinePlace(path, line.Number);
        if (line.IsBlank)
        {
            // A cut line that is only whitespace lost nothing.
            _blank++;
            return;
        }
        if (!line.Complete)
        {
            _partial++;
            var cutId = CheckRecordJson.Read(line, out _)?.Id;
            Partial.Add(new PartialLine(place, line.RawLength, cutId));
            return;
        }
        var record = CheckRecordJson.Read(line, out var problem);
        if (record is null)
        {
            _malformed++;
            MalformedCount++;
            if (Malformed.Count < MaxMalformedListed) Malformed.Add(new MalformedLine(place, problem!));
            return;
        }
        var id = record.Id;
        if (Index.TryGetValue(id, out var first))
        {
            _duplicates++;
            Duplicates.Add(new DuplicateRecord(id, new LinePlace(files[first.File], first.Line), place));
            return;
        }
        Index[id] = new RecordPlace(file, line.Offset, line.Bytes.Length, line.Number);
        _kept++;
        Kept++;
        if (sink is not null)
        {
            sink.Write(line.Bytes.Span);
            sink.WriteByte((byte)'\n');
        }
        else
        {
            FoundOrder.Add(id);
        }
    }
}
