using System.Text;
using System.Text.Json;

namespace CellCompiler.Screening;

/// <summary>
/// The results file of a screening run: whole lines only, appended and flushed to the operating
/// system one by one, so a killed process (even kill -9) leaves at most one partial last line,
/// which resuming cuts off. Data also reaches the disk (fsync) at least every second.
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

    /// <summary>Records go to standard output, each flushed when written.</summary>
    public static ResultLog ToStream(Stream stream) => new(stream, ownsStream: false);

    /// <summary>Starts a new results file, replacing an old one.</summary>
    public static ResultLog Create(string path) =>
        new(new FileStream(path, FileMode.Create, FileAccess.Write, FileShare.Read), ownsStream: true);

    /// <summary>
    /// Reopens a results file to continue it: cuts off a partial last line and returns what every
    /// complete record says (a line counts only with both an id and a status); those candidates
    /// must not be checked again.
    /// </summary>
    public static (ResultLog Log, Dictionary<string, PreviousRecord> Done) Resume(string path)
    {
        var done = new Dictionary<string, PreviousRecord>(StringComparer.Ordinal);
        if (!File.Exists(path)) return (Create(path), done);
        var stream = new FileStream(path, FileMode.Open, FileAccess.ReadWrite, FileShare.Read);
        long endOfLastLine = 0, position = 0;
        var line = new MemoryStream();
        var buffer = new byte[1 << 16];
        int read;
        while ((read = stream.Read(buffer, 0, buffer.Length)) > 0)
        {
            for (var i = 0; i < read; i++)
            {
                position++;
                if (buffer[i] != (byte)'\n')
                {
                    line.WriteByte(buffer[i]);
                    continue;
                }
                if (PreviousRecord.Parse(line.GetBuffer().AsSpan(0, (int)line.Length)) is { } record) done[record.Id] = record;
                line.SetLength(0);
                endOfLastLine = position;
            }
        }
        stream.SetLength(endOfLastLine);
        stream.Seek(endOfLastLine, SeekOrigin.Begin);
        return (new ResultLog(stream, ownsStream: true), done);
    }

    /// <summary>Writes one record as one whole line in a single write, then flushes it.</summary>
    public void Append(string jsonLine)
    {
        var bytes = Encoding.UTF8.GetBytes(jsonLine + "\n");
        _stream.Write(bytes);
        if (_stream is FileStream file)
        {
            var now = Environment.TickCount64;
            file.Flush(flushToDisk: now - _lastSync >= 1000);
            if (now - _lastSync >= 1000) _lastSync = now;
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
        catch (IOException)
        {
            // A write already failed (e.g. a full disk) and was reported; do not hide it behind this one.
        }
        finally
        {
            if (_ownsStream) _stream.Dispose();
        }
    }
}
