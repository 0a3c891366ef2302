using CellCompiler.Input;

namespace CellCompiler.Io;

/// <summary>Reads a whole file, but never more than a limit: a pipe or a device that reports no size is stopped while reading.</summary>
public static class BoundedFile
{
    public static byte[] ReadAll(string path, long limit, string what)
    {
        if (Directory.Exists(path)) throw new InputException(path, "", "is a folder, not a file");
        try
        {
            using var stream = new FileStream(path, FileMode.Open, FileAccess.Read, FileShare.ReadWrite | FileShare.Delete, bufferSize: 0);
            if (stream.CanSeek && stream.Length > limit)
                throw new InputException(path, "", $"the file is {stream.Length:N0} bytes; the limit is {limit:N0} bytes ({Limits.Describe(limit)}) for {what}");
            var buffer = new MemoryStream(stream.CanSeek ? (int)Math.Min(stream.Length, limit) : 1 << 16);
            var block = new byte[1 << 16];
            int read;
            while ((read = stream.Read(block, 0, block.Length)) > 0)
            {
                if (buffer.Length + read > limit)
                    throw new InputException(path, "", $"it holds more than {limit:N0} bytes ({Limits.Describe(limit)}), the most {what} may have (reading stopped)");
                buffer.Write(block, 0, read);
            }
            return buffer.ToArray();
        }
        catch (FileNotFoundException) { throw new InputException(path, "", "file not found"); }
        catch (DirectoryNotFoundException) { throw new InputException(path, "", "file not found"); }
        catch (Exception e) when (e is IOException or UnauthorizedAccessException)
        {
            throw new InputException(path, "", $"cannot read the file: {e.Message}");
        }
    }
}
