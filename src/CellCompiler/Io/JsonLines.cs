using System.Buffers;
using CellCompiler.Input;

namespace CellCompiler.Io;

/// <summary>
/// One physical line of a JSON Lines input. <see cref="Bytes"/> (without the "\n" and a "\r" before
/// it) stays valid only until the next line is read. A line over the limit is <see cref="TooLong"/>:
/// its bytes are skipped, never held. <see cref="Complete"/> is false for a last line without its
/// newline (e.g. a write cut short by a killed process).
/// </summary>
public readonly record struct JsonLine(long Number, long Offset, ReadOnlyMemory<byte> Bytes, bool TooLong, bool Complete, long RawLength)
{
    /// <summary>Only spaces, tabs and carriage returns (a too-long line is never blank).</summary>
    public bool IsBlank => !TooLong && Bytes.Span.IndexOfAnyExcept(" \t\r"u8) < 0;

    /// <summary>File offset just past this line's newline (or its end, when cut).</summary>
    public long End => Offset + RawLength + (Complete ? 1 : 0);
}

/// <summary>
/// The one JSON Lines splitter of this tool (populations, results, shards, resume): reads bytes in
/// blocks, "\n" ends a line, a "\r" before it is dropped, a UTF-8 byte order mark at the very start
/// is dropped, and a line longer than the limit is reported as too long without being held. Reading
/// a line that runs on past <see cref="GiveUpBytes"/> without a newline (a device such as /dev/zero,
/// a binary file) stops with an <see cref="InputException"/>, so no input can hold the reader forever
/// in one line.
/// </summary>
public sealed class JsonLines : IDisposable
{
    /// <summary>A line without a newline after this many bytes is not JSON Lines: reading stops.</summary>
    public const long GiveUpBytes = 64L << 20;

    private const int BlockBytes = 1 << 16;
    private readonly Stream _stream;
    private readonly string _origin;
    private readonly int _maxLineBytes;
    private readonly bool _ownsStream;
    private readonly byte[] _block = ArrayPool<byte>.Shared.Rent(BlockBytes);
    private readonly ArrayBufferWriter<byte> _line = new(1024);
    private int _blockStart, _blockEnd;
    private long _blockOffset;   // stream offset of _block[0]
    private long _lineNumber;
    private bool _atStart = true, _ended;

    public JsonLines(Stream stream, string origin, int maxLineBytes, bool ownsStream = true)
    {
        _stream = stream;
        _origin = origin;
        _maxLineBytes = maxLineBytes;
        _ownsStream = ownsStream;
    }

    /// <summary>Opens a file for reading; a missing or unreadable file is an <see cref="InputException"/> naming it.</summary>
    public static JsonLines OpenFile(string path, int maxLineBytes)
    {
        if (Directory.Exists(path)) throw new InputException(path, "", "is a folder, not a file");
        try
        {
            return new JsonLines(new FileStream(path, FileMode.Open, FileAccess.Read, FileShare.ReadWrite | FileShare.Delete, bufferSize: 0),
                path, maxLineBytes);
        }
        catch (FileNotFoundException) { throw new InputException(path, "", "file not found"); }
        catch (DirectoryNotFoundException) { throw new InputException(path, "", "file not found"); }
        catch (Exception e) when (e is IOException or UnauthorizedAccessException)
        {
            throw new InputException(path, "", $"cannot read the file: {e.Message}");
        }
    }

    /// <summary>Reads every line of a file, closing it at the end.</summary>
    public static IEnumerable<JsonLine> ReadFile(string path, int maxLineBytes)
    {
        using var lines = OpenFile(path, maxLineBytes);
        while (lines.TryRead(out var line)) yield return line;
    }

    /// <summary>Reads every line of a stream (not closed at the end).</summary>
    public static IEnumerable<JsonLine> Read(Stream stream, string origin, int maxLineBytes)
    {
        using var lines = new JsonLines(stream, origin, maxLineBytes, ownsStream: false);
        while (lines.TryRead(out var line)) yield return line;
    }

    public bool TryRead(out JsonLine line)
    {
        line = default;
        if (_ended) return false;
        _line.Clear();
        var tooLong = false;
        long raw = 0;
        var offset = _blockOffset + _blockStart;
        while (true)
        {
            if (_blockStart == _blockEnd && !Fill())
            {
                _ended = true;
                if (raw == 0) return false;
                line = Make(offset, tooLong, complete: false, raw);
                return true;
            }
            if (_atStart)
            {
                _atStart = false;
                if (_blockEnd - _blockStart >= 3 && _block.AsSpan(_blockStart, 3).SequenceEqual((ReadOnlySpan<byte>)[0xEF, 0xBB, 0xBF]))
                {
                    _blockStart += 3;
                    offset += 3;
                }
            }
            var span = _block.AsSpan(_blockStart, _blockEnd - _blockStart);
            var newline = span.IndexOf((byte)'\n');
            var piece = newline < 0 ? span : span[..newline];
            raw += piece.Length;
            if (!tooLong)
            {
                if (_line.WrittenCount + piece.Length > _maxLineBytes + 1) { tooLong = true; _line.Clear(); }
                else _line.Write(piece);
            }
            else if (raw > GiveUpBytes)
            {
                throw new InputException(_origin, "",
                    $"line {_lineNumber + 1} runs past {GiveUpBytes:N0} bytes without a line break: this is not JSON Lines (reading stopped)");
            }
            if (newline < 0)
            {
                _blockStart = _blockEnd;
                continue;
            }
            _blockStart += newline + 1;
            line = Make(offset, tooLong, complete: true, raw);
            return true;
        }
    }

    private JsonLine Make(long offset, bool tooLong, bool complete, long raw)
    {
        _lineNumber++;
        var bytes = _line.WrittenMemory;
        if (complete && bytes.Length > 0 && bytes.Span[^1] == (byte)'\r') bytes = bytes[..^1];
        if (!tooLong && bytes.Length > _maxLineBytes) tooLong = true;
        return new JsonLine(_lineNumber, offset, tooLong ? ReadOnlyMemory<byte>.Empty : bytes, tooLong, complete, raw);
    }

    private bool Fill()
    {
        _blockOffset += _blockEnd;
        _blockStart = _blockEnd = 0;
        int read;
        try { read = _stream.Read(_block, 0, BlockBytes); }
        catch (Exception e) when (e is IOException or UnauthorizedAccessException)
        {
            throw new InputException(_origin, "", $"cannot read: {e.Message}");
        }
        _blockEnd = read;
        return read > 0;
    }

    private bool _disposed;

    public void Dispose()
    {
        if (_disposed) return;
        _disposed = true;
        ArrayPool<byte>.Shared.Return(_block);
        if (_ownsStream) _stream.Dispose();
    }
}
