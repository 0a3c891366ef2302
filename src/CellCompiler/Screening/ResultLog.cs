using CellCompiler.Input;
using CellCompiler.Io;

namespace CellCompiler.Screening;

/// <summary>
/// The results file of a screening run: whole lines only, appended and flushed to the operating
/// system one by one, so a killed process (even kill -9) leaves at most one partial last line,
/// which resuming cuts off. Data also reaches the disk (fsync) at least every second and at the end.
/// </summary>
public sealed class ResultLog : IDisposable
{
    private readonly Stream _stream;
    private readonly bool _ownsStream;
    private long _lastSync = Environment.TickCount64;

    private ResultLog(Stream stream, bool ownsStream)
    {
        _stream = stream;
        _ownsStream = ownsStream;
    }

    /// <summary>Records go to a stream (standard output), each flushed when written.</summary>
    public static ResultLog ToStream(Stream stream) => new(stream, ownsStream: false);

    /// <summary>Starts a new results file, replacing an old one.</summary>
    public static ResultLog Create(string path) =>
        new(new FileStream(path, FileMode.Create, FileAccess.Write, FileShare.Read), ownsStream: true);

    /// <summary>
    /// Reopens a results file to continue it: cuts off a partial last line and hands every complete
    /// record to <paramref name="previous"/>; their ids are returned, and those candidates must not be
    /// checked again. A complete line that is not a record is told to <paramref name="warn"/> and kept.
    /// </summary>
    public static (ResultLog Log, HashSet<string> Done) Resume(string path, Action<CheckRecord> previous, Action<string> warn)
    {
        var done = new HashSet<string>(StringComparer.Ordinal);
        if (!File.Exists(path)) return (Create(path), done);
        var stream = new FileStream(path, FileMode.Open, FileAccess.ReadWrite, FileShare.Read);
        try
        {
            long end = 0;
            using (var lines = new JsonLines(stream, path, CheckRecordJson.MaxLineBytes, ownsStream: false))
            {
                while (lines.TryRead(out var line))
                {
                    if (!line.Complete) break; // a write cut short: recomputed
                    end = line.End;
                    if (line.IsBlank) continue;
                    var record = CheckRecordJson.Read(line, out var problem);
                    if (record is null)
                    {
                        warn($"{path}:{line.Number} is not a check record ({problem}); it is kept as it is and counts for no candidate");
                        continue;
                    }
                    if (done.Add(record.Id)) previous(record);
                }
            }
            stream.SetLength(end);
            stream.Seek(end, SeekOrigin.Begin);
            return (new ResultLog(stream, ownsStream: true), done);
        }
        catch
        {
            stream.Dispose();
            throw;
        }
    }

    /// <summary>Whether a results file holds at least one non-blank complete line.</summary>
    public static bool HoldsRecords(string path)
    {
        if (!File.Exists(path)) return false;
        foreach (var line in JsonLines.ReadFile(path, CheckRecordJson.MaxLineBytes))
            if (line.Complete && !line.IsBlank) return true;
        return false;
    }

    /// <summary>Writes one record as one whole line in a single write, then flushes it.</summary>
    public void Append(CheckRecord record)
    {
        byte[] bytes = [.. CheckRecordJson.ToUtf8(record), (byte)'\n'];
        _stream.Write(bytes);
        if (_stream is FileStream file)
        {
            var now = Environment.TickCount64;
            var sync = now - _lastSync >= 1000;
            file.Flush(flushToDisk: sync);
            if (sync) _lastSync = now;
        }
        else
        {
            _stream.Flush();
        }
    }

    public void Dispose()
    {
        try
        {
            if (_stream is FileStream file) file.Flush(flushToDisk: true);
            else _stream.Flush();
        }
        catch (Exception e) when (e is IOException or UnauthorizedAccessException)
        {
            // A write already failed (e.g. a full disk) and was reported; do not hide it behind this one.
        }
        finally
        {
            if (_ownsStream) _stream.Dispose();
        }
    }
}
