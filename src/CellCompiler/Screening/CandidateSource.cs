using System.Security.Cryptography;
using System.Text;
using System.Text.Json;
using CellCompiler.Input;
using CellCompiler.Io;

namespace CellCompiler.Screening;

/// <summary>What one INPUT of `check` is: JSON Lines (a population) or one genotype document.</summary>
public enum InputKind { Population, Genotype }

/// <summary>One input: a file, or "-" for standard input. <see cref="Rereadable"/>: a regular file that can be read twice.</summary>
public sealed record InputPart(string Path, InputKind Kind, bool Rereadable);

/// <summary>The content of one input as a resumed run must find it again: its SHA-256 over its lines, and its candidate count.</summary>
public sealed record InputFingerprint(string Path, string? Sha256, long Candidates);

/// <summary>What a first pass over rereadable inputs found.</summary>
public sealed record InputScan(IReadOnlyList<InputFingerprint> Inputs, long Candidates, long InShard, (string Id, LinePlace First, LinePlace Again)? FirstRepeat);

/// <summary>
/// The candidates of a `check` run, from its INPUT arguments: files, folders of genotype files
/// (.json, .jsonl, .ndjson, not hidden, in name order) and "-" for JSON Lines on standard input.
/// A file is a population when it is named .jsonl or .ndjson or its first two non-blank lines are
/// each a JSON object; otherwise it is one genotype document. Every read is bounded: a genotype
/// document past 1 MiB and a population line past its limit are refused while reading, so pipes and
/// devices cannot make the reader hold more. A single INPUT that is one genotype file is parsed up
/// front (bad input is exit 2, as for `compile`); anything else turns a bad genotype into that
/// candidate's `invalid` record.
/// </summary>
public sealed class CandidateSource
{
    /// <summary>At most this many repeated ids are named one by one; all are counted.</summary>
    public const int RepeatsListed = 20;

    private readonly Func<Stream> _stdin;
    private readonly Candidate? _single;
    private readonly Dictionary<string, byte[]> _heads = new(StringComparer.Ordinal);
    private readonly Dictionary<string, Stream> _pipes = new(StringComparer.Ordinal);

    private CandidateSource(IReadOnlyList<InputPart> parts, Func<Stream> stdin, Candidate? single)
    {
        Parts = parts;
        _stdin = stdin;
        _single = single;
    }

    public IReadOnlyList<InputPart> Parts { get; }

    /// <summary>Exactly one INPUT, and it is one genotype file.</summary>
    public bool Single => _single is not null;

    /// <summary>Every input is a regular file: it can be scanned first and fingerprinted, and a run on it resumed.</summary>
    public bool Rereadable => Parts.All(p => p.Rereadable);

    /// <summary>Ids seen again while reading (each is also told to the warning callback, the first <see cref="RepeatsListed"/> by name).</summary>
    public long RepeatedIds { get; private set; }

    public static CandidateSource Open(IReadOnlyList<string> inputs, Func<Stream> stdin)
    {
        if (inputs.Count == 0) throw new InputException("command line", "INPUT", "give a genotype file, a population file, a folder or - for standard input");
        if (inputs.Count(i => i == "-") > 1) throw new InputException("command line", "INPUT", "standard input (-) can be read only once");
        var parts = new List<InputPart>();
        var heads = new Dictionary<string, byte[]>(StringComparer.Ordinal);
        var pipes = new Dictionary<string, Stream>(StringComparer.Ordinal);
        foreach (var input in inputs)
        {
            if (input == "-") { parts.Add(new InputPart("-", InputKind.Population, false)); continue; }
            if (Directory.Exists(input))
            {
                var files = GenotypeFiles(input);
                if (files.Count == 0)
                    throw new InputException(input, "", "the folder holds no genotype files (.json, .jsonl or .ndjson)");
                foreach (var file in files) parts.Add(Classify(file, heads, pipes));
                continue;
            }
            parts.Add(Classify(input, heads, pipes));
        }
        Candidate? single = null;
        if (inputs.Count == 1 && parts is [{ Kind: InputKind.Genotype } only])
        {
            // One genotype file: bad input is exit 2 with its file and JSON path, as for `compile`.
            var genotype = GenotypeReader.Parse(heads[only.Path], only.Path, System.IO.Path.GetFileNameWithoutExtension(only.Path));
            single = Candidate.Valid(genotype.Id ?? genotype.Name, genotype, new LinePlace(only.Path, 1));
        }
        // Standard input is opened now, so that a closed one is refused before anything is written.
        if (inputs.Contains("-"))
        {
            var opened = stdin();
            stdin = () => opened;
        }
        var source = new CandidateSource(parts, stdin, single);
        foreach (var (path, head) in heads) source._heads[path] = head;
        foreach (var (path, pipe) in pipes) source._pipes[path] = pipe;
        return source;
    }

    private static List<string> GenotypeFiles(string folder)
    {
        try
        {
            return Directory.EnumerateFiles(folder)
                .Where(f => !System.IO.Path.GetFileName(f).StartsWith('.'))
                .Where(f => System.IO.Path.GetExtension(f).ToLowerInvariant() is ".json" or ".jsonl" or ".ndjson")
                .Order(StringComparer.Ordinal).ToList();
        }
        catch (Exception e) when (e is IOException or UnauthorizedAccessException)
        {
            throw new InputException(folder, "", $"cannot read the folder: {e.Message}");
        }
    }

    /// <summary>Population or genotype, from the name or the first MiB; a genotype's bytes (bounded) are kept for parsing.</summary>
    private static InputPart Classify(string path, Dictionary<string, byte[]> heads, Dictionary<string, Stream> pipes)
    {
        var stream = OpenFile(path);
        var keepOpen = false;
        try
        {
            var part = Classify(path, stream, heads);
            // A pipe cannot be opened again: the population is read on from this stream, after the bytes already read.
            if (!part.Rereadable && part.Kind == InputKind.Population)
            {
                pipes[path] = new ReplayStream(heads.Remove(path, out var head) ? head : [], stream);
                keepOpen = true;
            }
            return part;
        }
        finally
        {
            if (!keepOpen) stream.Dispose();
        }
    }

    private static InputPart Classify(string path, FileStream stream, Dictionary<string, byte[]> heads)
    {
        // Pipes cannot seek: they are read once, as they come (no first pass, no fingerprint, no resume).
        var rereadable = stream.CanSeek;
        var extension = System.IO.Path.GetExtension(path).ToLowerInvariant();
        if (extension is ".jsonl" or ".ndjson")
        {
            return new InputPart(path, InputKind.Population, rereadable);
        }
        var head = ReadBounded(stream, path, Limits.MaxJsonBytes + 1);
        var complete = head.Length <= Limits.MaxJsonBytes;
        if (!complete || !IsOneJsonValue(head))
        {
            if (LooksLikeJsonLines(head))
            {
                if (!rereadable) heads[path] = head;
                return new InputPart(path, InputKind.Population, rereadable);
            }
            if (!complete)
                throw new InputException(path, "", $"the file holds more than {Limits.MaxJsonBytes:N0} bytes (1 MiB, the limit of a genotype) and is not JSON Lines");
        }
        heads[path] = head;
        return new InputPart(path, InputKind.Genotype, rereadable);
    }

    private static bool IsOneJsonValue(byte[] bytes)
    {
        try
        {
            using var _ = JsonDocument.Parse(bytes.AsMemory(), new JsonDocumentOptions { MaxDepth = 64 });
            return true;
        }
        catch (Exception e) when (e is JsonException or ArgumentException) { return false; }
    }

    /// <summary>The first two non-blank lines are each a JSON object.</summary>
    private static bool LooksLikeJsonLines(byte[] head)
    {
        var objects = 0;
        using var stream = new MemoryStream(head, writable: false);
        foreach (var line in JsonLines.Read(stream, "", Limits.MaxJsonBytes))
        {
            if (line.IsBlank) continue;
            if (!line.Complete || line.TooLong) return false;
            try
            {
                using var document = JsonDocument.Parse(line.Bytes);
                if (document.RootElement.ValueKind != JsonValueKind.Object) return false;
            }
            catch (Exception e) when (e is JsonException or ArgumentException) { return false; }
            if (++objects == 2) return true;
        }
        return false;
    }

    private static FileStream OpenFile(string path)
    {
        try { return new FileStream(path, FileMode.Open, FileAccess.Read, FileShare.ReadWrite | FileShare.Delete, bufferSize: 0); }
        catch (FileNotFoundException) { throw new InputException(path, "", "file not found"); }
        catch (DirectoryNotFoundException) { throw new InputException(path, "", "file not found"); }
        catch (Exception e) when (e is IOException or UnauthorizedAccessException)
        {
            throw new InputException(path, "", $"cannot read the file: {e.Message}");
        }
    }

    /// <summary>Reads at most <paramref name="limit"/> bytes: a pipe or a device is never read past it.</summary>
    private static byte[] ReadBounded(Stream stream, string path, int limit)
    {
        var buffer = new byte[Math.Min(limit, 1 << 16)];
        var count = 0;
        try
        {
            while (count < limit)
            {
                if (count == buffer.Length) Array.Resize(ref buffer, Math.Min(limit, buffer.Length * 2));
                var read = stream.Read(buffer, count, buffer.Length - count);
                if (read == 0) break;
                count += read;
            }
        }
        catch (Exception e) when (e is IOException or UnauthorizedAccessException)
        {
            throw new InputException(path, "", $"cannot read the file: {e.Message}");
        }
        return buffer[..count];
    }

    private string IdPrefix(InputPart part) => Parts.Count > 1 && part.Path != "-" ? System.IO.Path.GetFileName(part.Path) + ":" : "";

    /// <summary>
    /// Every candidate, read lazily in input order. An id met again is told to <paramref name="warn"/>
    /// naming both places; both candidates are checked.
    /// </summary>
    public IEnumerable<Candidate> Read(Action<string> warn)
    {
        var registry = new IdRegistry();
        foreach (var candidate in ReadAll())
        {
            if (registry.Add(candidate.Id, candidate.Place) is { } first)
            {
                RepeatedIds++;
                if (RepeatedIds <= RepeatsListed)
                    warn($"the id '{candidate.Id}' at {candidate.Place} was already used at {first}; both are checked, " +
                         "and results, merge and --resume match records by id, so give every candidate its own id");
                else if (RepeatedIds == RepeatsListed + 1)
                    warn("more ids repeat; the summary counts them");
            }
            yield return candidate;
        }
    }

    private IEnumerable<Candidate> ReadAll()
    {
        if (_single is not null)
        {
            yield return _single;
            yield break;
        }
        foreach (var part in Parts)
        {
            if (part.Kind == InputKind.Genotype)
            {
                yield return GenotypeCandidate(part.Path, _heads[part.Path]);
                continue;
            }
            if (part.Path == "-")
            {
                foreach (var candidate in PopulationReader.Read(_stdin(), "<stdin>", IdPrefix(part))) yield return candidate;
                continue;
            }
            if (_pipes.Remove(part.Path, out var pipe))
            {
                using (pipe)
                    foreach (var candidate in PopulationReader.Read(pipe, part.Path, IdPrefix(part))) yield return candidate;
                continue;
            }
            foreach (var candidate in PopulationReader.ReadFile(part.Path, IdPrefix(part))) yield return candidate;
        }
    }

    private static Candidate GenotypeCandidate(string path, byte[] bytes)
    {
        var place = new LinePlace(path, 1);
        var name = System.IO.Path.GetFileNameWithoutExtension(path);
        var candidate = PopulationReader.Parse(bytes, path, name);
        return candidate.Genotype is { } genotype ? Candidate.Valid(genotype.Id ?? genotype.Name, genotype, place) : candidate with { Place = place };
    }

    /// <summary>
    /// A first pass over rereadable inputs (never standard input or a pipe): each input's SHA-256 over its
    /// lines, the candidates in all and in <paramref name="shard"/>, and the first id met twice.
    /// </summary>
    public InputScan Scan(ShardSelector shard)
    {
        if (!Rereadable) throw new InvalidOperationException("only regular files can be scanned before the run");
        var registry = new IdRegistry();
        (string, LinePlace, LinePlace)? firstRepeat = null;
        var fingerprints = new List<InputFingerprint>();
        long all = 0, inShard = 0;
        void Count(string id, LinePlace place)
        {
            all++;
            if (shard.Contains(id)) inShard++;
            if (registry.Add(id, place) is { } first) firstRepeat ??= (id, first, place);
        }
        foreach (var part in Parts)
        {
            using var sha = IncrementalHash.CreateHash(HashAlgorithmName.SHA256);
            long candidates = 0;
            if (part.Kind == InputKind.Genotype)
            {
                var bytes = _heads[part.Path];
                sha.AppendData(bytes);
                var candidate = _single ?? GenotypeCandidate(part.Path, bytes);
                Count(candidate.Id, candidate.Place);
                candidates = 1;
            }
            else
            {
                foreach (var line in JsonLines.ReadFile(part.Path, Limits.MaxJsonBytes))
                {
                    if (line.TooLong) sha.AppendData(Encoding.UTF8.GetBytes($"<{line.RawLength} bytes>"));
                    else sha.AppendData(line.Bytes.Span);
                    sha.AppendData("\n"u8);
                    if (line.IsBlank) continue;
                    var defaultId = $"{IdPrefix(part)}line-{line.Number}";
                    Count(line.TooLong ? defaultId : PopulationReader.IdOf(line.Bytes, defaultId), new LinePlace(part.Path, line.Number));
                    candidates++;
                }
            }
            fingerprints.Add(new InputFingerprint(System.IO.Path.GetFullPath(part.Path), Convert.ToHexStringLower(sha.GetHashAndReset()), candidates));
        }
        return new InputScan(fingerprints, all, inShard, firstRepeat);
    }
}

/// <summary>Reads bytes already taken from a pipe, then the rest of the pipe.</summary>
internal sealed class ReplayStream(byte[] head, Stream rest) : Stream
{
    private int _at;

    public override int Read(byte[] buffer, int offset, int count)
    {
        if (_at < head.Length)
        {
            var n = Math.Min(count, head.Length - _at);
            Array.Copy(head, _at, buffer, offset, n);
            _at += n;
            return n;
        }
        return rest.Read(buffer, offset, count);
    }

    public override bool CanRead => true;
    public override bool CanSeek => false;
    public override bool CanWrite => false;
    public override long Length => throw new NotSupportedException();
    public override long Position { get => throw new NotSupportedException(); set => throw new NotSupportedException(); }
    public override void Flush() { }
    public override long Seek(long offset, SeekOrigin origin) => throw new NotSupportedException();
    public override void SetLength(long value) => throw new NotSupportedException();
    public override void Write(byte[] buffer, int offset, int count) => throw new NotSupportedException();

    protected override void Dispose(bool disposing)
    {
        if (disposing) rest.Dispose();
        base.Dispose(disposing);
    }
}
