namespace CellCompiler.Io;

/// <summary>
/// A temporary file without a name, for keeping what is read from a stream that can be read only
/// once (a pipe) without holding it in memory: it is unlinked as soon as it is created, so that it
/// vanishes when closed, also when the process is killed.
/// </summary>
internal static class SpoolFile
{
    public static FileStream Create()
    {
        var path = Path.Combine(Path.GetTempPath(), $".cellc-spool-{Environment.ProcessId}-{Guid.NewGuid():N}.tmp");
        var stream = new FileStream(path, FileMode.CreateNew, FileAccess.ReadWrite, FileShare.None, 1 << 16, FileOptions.DeleteOnClose);
        // Linux keeps an open file that has no name; DeleteOnClose covers a system that refuses this.
        try { File.Delete(path); }
        catch (Exception e) when (e is IOException or UnauthorizedAccessException) { }
        return stream;
    }
}
