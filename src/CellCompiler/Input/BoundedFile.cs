namespace CellCompiler.Input;

/// <summary>
/// Reads an input file whole, but never more than a limit: the size is checked while reading, not
/// with stat() alone, so a pipe, a device (/dev/zero) or a file that grows is refused at the limit
/// instead of filling memory.
/// </summary>
public static class BoundedFile
{
    public static byte[] Read(string path, int limit, string what)
    {
        try
        {
            if (Directory.Exists(path)) throw new InputException(path, "", $"is a folder, not {what}");
            if (!File.Exists(path)) throw new InputException(path, "", "file not found");
            using var stream = new FileStream(path, FileMode.Open, FileAccess.Read, FileShare.ReadWrite, bufferSize: 0);
            var buffer = new byte[Math.Min(limit + 1L, stream.CanSeek ? Math.Max(stream.Length + 1, 4096) : 65536)];
            var length = 0;
            while (true)
            {
                if (length == buffer.Length)
                {
                    if (buffer.Length > limit) break;
                    Array.Resize(ref buffer, (int)Math.Min(limit + 1L, buffer.Length * 2L));
                }
                var read = stream.Read(buffer, length, buffer.Length - length);
                if (read == 0) break;
                length += read;
            }
            if (length > limit)
            {
                // A regular file can say how large it is; a pipe or a device cannot.
                var size = stream.CanSeek ? $"the file is {stream.Length:N0} bytes" : "the input is larger than that";
                throw new InputException(path, "", $"{size}; the limit is {limit:N0} bytes ({Limits.Describe(limit)})");
            }
            return buffer.AsSpan(0, length).ToArray();
        }
        catch (IOException e) { throw new InputException(path, "", $"cannot read the file: {e.Message}"); }
        catch (UnauthorizedAccessException e) { throw new InputException(path, "", $"cannot read the file: {e.Message}"); }
    }
}
