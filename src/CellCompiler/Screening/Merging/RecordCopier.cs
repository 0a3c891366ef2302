using CellCompiler.Input;
using Microsoft.Win32.SafeHandles;

namespace CellCompiler.Screening.Merging;

/// <summary>
/// The second pass with a population: each kept record is read at its offset, in population order,
/// through a small window per shard (at most <see cref="OpenShardLimit"/> files open at once).
/// </summary>
internal static class RecordCopier
{
    private const int OpenShardLimit = 64;
    private const int BlockBytes = 1 << 16;

    public static long Copy(IReadOnlyList<string> files, long[] lengths, List<RecordPlace> order, Stream sink)
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
}
