using System.Buffers;
using System.Text;
using System.Text.Json;
using CellCompiler.Input;
using Microsoft.Win32.SafeHandles;

namespace CellCompiler.Screening;

/// <summary>Where a line sits in the input: a file and its physical line number (from 1).</summary>
public readonly record struct LinePlace(string File, long Line)
{
    public override string ToString() => $"{File}:{Line}";
}

/// <summary>A later record of an id already kept: <see cref="First"/> is the kept one.</summary>
public sealed record DuplicateRecord(string Id, LinePlace First, LinePlace Again);

/// <summary>A shard line that is not a record (not a JSON object with a non-empty string `id`).</summary>
public sealed record MalformedLine(LinePlace Place, string Problem);

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

/// <summary>
/// `cellc merge`: joins the JSON Lines outputs of `cellc check --shard K/N` runs into one file and
/// finds ids that are missing (with a population), duplicated, or lines that are not records.
/// </summary>
/// <remarks>
/// Shard files are streamed, never loaded whole: memory holds one line at a time plus, per id, its
/// place (file, byte offset, line). Without a population the kept lines are copied while reading, in
/// shard file order then line order. With a population the first pass only indexes the records and
/// the second copies them in population order by reading each at its offset (then the unexpected
/// ones, in the order they were found). Kept lines are copied byte for byte, each ended by "\n"
/// (a "\r\n" ending becomes "\n"; a UTF-8 byte order mark at a file's start is dropped).
/// The output goes to a temporary file in the output's folder, renamed over the output only when
/// complete, so the output is never half written. Unreadable or missing input files are an
/// <see cref="InputException"/> naming the file (nothing is written); failures to write the output
/// surface as <see cref="IOException"/> or <see cref="UnauthorizedAccessException"/>.
/// </remarks>
public static class ShardMerger
{
    /// <summary>A check record is a few KiB; a longer line is reported as malformed without being held.</summary>
    public const int MaxRecordBytes = 16 << 20;

    /// <summary>At most this many malformed lines are kept for the report (all are counted).</summary>
    public const int MaxMalformedListed = 1000;

    private const int BlockBytes = 1 << 16;
    private const int OpenShardLimit = 64;

    private readonly record struct Place(int File, long Offset, int Length, long Line);

    public static MergeReport Merge(string output, IReadOnlyList<string> shards, string? population)
    {
        ArgumentNullException.ThrowIfNull(output);
        ArgumentNullException.ThrowIfNull(shards);
        if (shards.Count == 0) throw new ArgumentException("at least one shard file is needed", nameof(shards));

        // Every input is checked before anything is written, so a typo never costs the output.
        var outputFull = Path.GetFullPath(output);
        foreach (var input in (population is null ? shards : shards.Append(population)))
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
            foreach (var id in ReadPopulationIds(population))
            {
                if (expected.Add(id)) expectedOrder.Add(id);
                else populationDuplicates.Add(id);
            }
        }

        var directory = Path.GetDirectoryName(outputFull)!;
        var temporary = Path.Combine(directory, $".{Path.GetFileName(outputFull)}.{Environment.ProcessId}.merge.tmp");
        var moved = false;
        try
        {
            MergeReport report;
            using (var sink = new FileStream(temporary, FileMode.Create, FileAccess.Write, FileShare.None, BlockBytes))
            {
                var scan = new Scan(shards, expectedOrder is null ? sink : null);
                for (var file = 0; file < shards.Count; file++)
                    scan.ReadShard(file);

                long records;
                List<string> missing = [];
                List<string> unexpected = [];
                if (expectedOrder is null)
                {
                    records = scan.Kept;
                }
                else
                {
                    var order = new List<Place>(scan.Index.Count);
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
                    records = CopyInOrder(shards, scan.Lengths, order, sink);
                }
                sink.Flush(flushToDisk: true);
                report = new MergeReport(output, population, records, expectedOrder?.Count, scan.Counts, missing,
                    scan.Duplicates, scan.Malformed, scan.MalformedCount, scan.Partial, unexpected, populationDuplicates);
            }
            File.Move(temporary, outputFull, overwrite: true);
            moved = true;
            return report;
        }
        finally
        {
            if (!moved) TryDelete(temporary);
        }
    }

    /// <summary>
    /// The ids of a population file exactly as `cellc check` names its candidates: each non-blank
    /// line's `id` (a string, or a number's text), else `line-N`; an invalid line keeps the id
    /// <see cref="PopulationReader"/> recovers for it. Only the id is read, not the genotype, except in
    /// the one case where the genotype's validity decides the id (an id holding surrogate pairs).
    /// </summary>
    public static IEnumerable<string> ReadPopulationIds(string path)
    {
        StreamReader reader;
        try { reader = new StreamReader(path); }
        catch (Exception e) when (e is IOException or UnauthorizedAccessException)
        {
            throw new InputException(path, "", $"cannot read the file: {e.Message}");
        }
        using (reader)
        {
            var lineNumber = 0L;
            var buffer = new StringBuilder();
            while (true)
            {
                bool complete, tooLong;
                try { (complete, tooLong) = BoundedLines.Read(reader, buffer, Limits.MaxJsonBytes); }
                catch (Exception e) when (e is IOException or UnauthorizedAccessException)
                {
                    throw new InputException(path, "", $"cannot read the file: {e.Message}");
                }
                if (!complete && buffer.Length == 0 && !tooLong) yield break;
                lineNumber++;
                var defaultId = $"line-{lineNumber}";
                if (tooLong) yield return defaultId;
                else if (!string.IsNullOrWhiteSpace(buffer.ToString()))
                    yield return LineId(Encoding.UTF8.GetBytes(buffer.ToString()), $"{path} line {lineNumber}", defaultId);
                if (!complete) yield break;
            }
        }
    }

    /// <summary>The id of one population line, as <see cref="PopulationReader.Parse"/> would name it.</summary>
    private static string LineId(byte[] utf8, string origin, string defaultId)
    {
        try
        {
            using var document = JsonDocument.Parse(utf8);
            var root = document.RootElement;
            // Not an object: the genotype is invalid and PopulationReader recovers no id.
            if (root.ValueKind != JsonValueKind.Object) return defaultId;
            if (!root.TryGetProperty("id", out var id)) return defaultId;
            switch (id.ValueKind)
            {
                case JsonValueKind.Number:
                    return id.GetRawText();
                case JsonValueKind.String:
                    var text = id.GetString()!;
                    // Out of 1..256 characters the genotype is invalid, and the recovered id is refused too.
                    if (text.Length is 0 or > 256) return defaultId;
                    if (!text.Any(char.IsSurrogate)) return text;
                    break; // valid genotype: this text; invalid: line-N. Only a full parse can tell.
                default:
                    return defaultId;
            }
        }
        catch (Exception e) when (e is JsonException or InvalidOperationException or ArgumentException) { }
        return PopulationReader.Parse(utf8, origin, defaultId).Id;
    }


    /// <summary>
    /// The id of one shard line when it is a JSON object holding a non-empty string `id` (once), else
    /// null and the problem. The whole line is validated as JSON; other fields are skipped unread.
    /// </summary>
    public static string? RecordId(ReadOnlySpan<byte> line, out string? problem)
    {
        problem = null;
        var reader = new Utf8JsonReader(line, new JsonReaderOptions { MaxDepth = 64 });
        try
        {
            if (!reader.Read()) { problem = "not a JSON object (the line holds no value)"; return null; }
            if (reader.TokenType != JsonTokenType.StartObject)
            {
                problem = $"not a JSON object (it starts with {Describe(reader.TokenType)})";
                return null;
            }
            string? id = null;
            var seen = false;
            while (reader.Read() && reader.TokenType == JsonTokenType.PropertyName)
            {
                var isId = reader.ValueTextEquals("id"u8);
                reader.Read();
                if (!isId)
                {
                    reader.Skip();
                    continue;
                }
                if (seen) { problem = "the key 'id' appears more than once"; return null; }
                seen = true;
                if (reader.TokenType != JsonTokenType.String)
                {
                    problem = $"'id' is {Describe(reader.TokenType)}, not a string";
                    return null;
                }
                id = reader.GetString();
            }
            // A trailing value after the object makes Read throw; reaching here means the line is one object.
            while (reader.Read()) { }
            if (!seen) { problem = "no 'id' field"; return null; }
            if (string.IsNullOrEmpty(id)) { problem = "'id' is an empty string"; return null; }
            return id;
        }
        catch (JsonException e)
        {
            problem = $"not valid JSON (at byte {(e.BytePositionInLine ?? 0) + 1})";
            return null;
        }
        catch (InvalidOperationException)
        {
            problem = "'id' is not valid UTF-8 text";
            return null;
        }
    }

    private static string Describe(JsonTokenType token) => token switch
    {
        JsonTokenType.StartArray => "an array",
        JsonTokenType.StartObject => "an object",
        JsonTokenType.String => "a string",
        JsonTokenType.Number => "a number",
        JsonTokenType.True or JsonTokenType.False => "a boolean",
        JsonTokenType.Null => "null",
        _ => token.ToString(),
    };

    /// <summary>The first pass over the shards: counts, problems, and either the copy or the index.</summary>
    private sealed class Scan(IReadOnlyList<string> files, Stream? sink)
    {
        public Dictionary<string, Place> Index { get; } = new(StringComparer.Ordinal);
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
            var block = ArrayPool<byte>.Shared.Rent(BlockBytes);
            var line = new ArrayBufferWriter<byte>(1024);
            try
            {
                using var stream = OpenRead(path);
                long position = 0;      // file offset of block[0]
                long lineStart = 0;     // file offset of the current line's first byte
                var tooLong = false;
                while (true)
                {
                    int read;
                    try { read = stream.Read(block, 0, BlockBytes); }
                    catch (Exception e) when (e is IOException or UnauthorizedAccessException)
                    {
                        throw new InputException(path, "", $"cannot read the file: {e.Message}");
                    }
                    if (read == 0) break;
                    var span = block.AsSpan(0, read);
                    var at = 0;
                    while (at < span.Length)
                    {
                        var newline = span[at..].IndexOf((byte)'\n');
                        var piece = newline < 0 ? span[at..] : span.Slice(at, newline);
                        if (!tooLong)
                        {
                            if (line.WrittenCount + piece.Length > MaxRecordBytes) { tooLong = true; line.Clear(); }
                            else line.Write(piece);
                        }
                        if (newline < 0) break;
                        var end = position + at + newline; // offset of the '\n'
                        Line(file, path, lineStart, line.WrittenSpan, tooLong, complete: true, end - lineStart);
                        at += newline + 1;
                        lineStart = position + at;
                        line.Clear();
                        tooLong = false;
                    }
                    position += read;
                }
                if (position > lineStart)
                    Line(file, path, lineStart, line.WrittenSpan, tooLong, complete: false, position - lineStart);
                Lengths[file] = position;
            }
            finally
            {
                ArrayPool<byte>.Shared.Return(block);
            }
            Counts.Add(new ShardCounts(path, _lines, _kept, _duplicates, _malformed, _partial, _blank));
        }

        private void Line(int file, string path, long offset, ReadOnlySpan<byte> bytes, bool tooLong, bool complete, long rawLength)
        {
            _lines++;
            var place = new LinePlace(path, _lines);
            // A byte order mark at the very start of a file is not part of the record.
            if (offset == 0 && bytes.StartsWith((ReadOnlySpan<byte>)[0xEF, 0xBB, 0xBF]))
            {
                bytes = bytes[3..];
                offset = 3;
            }
            if (complete && bytes.Length > 0 && bytes[^1] == '\r') bytes = bytes[..^1];
            if (!tooLong && IsBlank(bytes))
            {
                // A cut line that is only whitespace lost nothing.
                _blank++;
                return;
            }
            if (!complete)
            {
                _partial++;
                var cutId = tooLong ? null : RecordId(bytes, out _);
                Partial.Add(new PartialLine(place, rawLength, cutId));
                return;
            }
            string? id;
            string? problem;
            if (tooLong) (id, problem) = (null, $"the line is longer than the {MaxRecordBytes:N0}-byte limit");
            else id = RecordId(bytes, out problem);
            if (id is null)
            {
                _malformed++;
                MalformedCount++;
                if (Malformed.Count < MaxMalformedListed) Malformed.Add(new MalformedLine(place, problem!));
                return;
            }
            if (Index.TryGetValue(id, out var first))
            {
                _duplicates++;
                Duplicates.Add(new DuplicateRecord(id, new LinePlace(files[first.File], first.Line), place));
                return;
            }
            Index[id] = new Place(file, offset, bytes.Length, _lines);
            _kept++;
            Kept++;
            if (sink is not null)
            {
                sink.Write(bytes);
                sink.WriteByte((byte)'\n');
            }
            else
            {
                FoundOrder.Add(id);
            }
        }

        private static bool IsBlank(ReadOnlySpan<byte> bytes)
        {
            foreach (var b in bytes)
                if (b is not ((byte)' ' or (byte)'\t' or (byte)'\r'))
                    return false;
            return true;
        }
    }

    /// <summary>The second pass with a population: each record read at its offset through a small window per shard.</summary>
    private static long CopyInOrder(IReadOnlyList<string> files, long[] lengths, List<Place> order, Stream sink)
    {
        var windows = new Dictionary<int, Window>();
        var opened = new Queue<int>();
        try
        {
            foreach (var place in order)
            {
                if (!windows.TryGetValue(place.File, out var window))
                {
                    if (windows.Count >= OpenShardLimit)
                    {
                        var oldest = opened.Dequeue();
                        windows[oldest].Dispose();
                        windows.Remove(oldest);
                    }
                    window = new Window(files[place.File], lengths[place.File]);
                    windows[place.File] = window;
                    opened.Enqueue(place.File);
                }
                sink.Write(window.Record(place.Offset, place.Length));
                sink.WriteByte((byte)'\n');
            }
        }
        finally
        {
            foreach (var window in windows.Values) window.Dispose();
        }
        return order.Count;
    }

    /// <summary>Reads records of one shard by offset, through a buffer that makes in-order reads sequential.</summary>
    private sealed class Window : IDisposable
    {
        private readonly string _path;
        private readonly SafeFileHandle _handle;
        private byte[] _buffer = new byte[BlockBytes];
        private long _start;
        private int _count;

        public Window(string path, long expectedLength)
        {
            _path = path;
            try
            {
                _handle = File.OpenHandle(path, FileMode.Open, FileAccess.Read, FileShare.ReadWrite | FileShare.Delete);
                if (RandomAccess.GetLength(_handle) != expectedLength)
                {
                    _handle.Dispose();
                    throw Changed();
                }
            }
            catch (Exception e) when (e is IOException or UnauthorizedAccessException)
            {
                throw new InputException(path, "", $"cannot read the file: {e.Message}");
            }
        }

        /// <summary>The record's bytes; the byte after them must still end its line.</summary>
        public ReadOnlySpan<byte> Record(long offset, int length)
        {
            var needed = length + 1; // the record and its line ending
            if (offset < _start || offset + needed > _start + _count)
            {
                // Reading on from the window's end (shards written in population order) fills a whole
                // block; a jump (completion order) reads just the record, not a block per record.
                var sequential = offset >= _start && offset <= _start + _count + 4096 && _count > 0;
                var want = sequential ? Math.Max(needed, BlockBytes) : needed;
                if (_buffer.Length < want) _buffer = new byte[want];
                _start = offset;
                _count = 0;
                try
                {
                    while (_count < want)
                    {
                        var read = RandomAccess.Read(_handle, _buffer.AsSpan(_count, want - _count), _start + _count);
                        if (read == 0) break;
                        _count += read;
                    }
                }
                catch (Exception e) when (e is IOException or UnauthorizedAccessException)
                {
                    throw new InputException(_path, "", $"cannot read the file: {e.Message}");
                }
                if (_count < needed) throw Changed();
            }
            var slice = _buffer.AsSpan((int)(offset - _start), needed);
            if (slice[^1] is not ((byte)'\n' or (byte)'\r')) throw Changed();
            return slice[..^1];
        }

        private InputException Changed() => new(_path, "", "the file changed while it was being merged");

        public void Dispose() => _handle.Dispose();
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

    private static FileStream OpenRead(string path)
    {
        try
        {
            // Unbuffered: the reader takes blocks of its own.
            return new FileStream(path, FileMode.Open, FileAccess.Read, FileShare.ReadWrite | FileShare.Delete, bufferSize: 0);
        }
        catch (Exception e) when (e is IOException or UnauthorizedAccessException)
        {
            throw new InputException(path, "", $"cannot read the file: {e.Message}");
        }
    }

    private static void TryDelete(string path)
    {
        try { File.Delete(path); } catch (IOException) { } catch (UnauthorizedAccessException) { }
    }
}
