using System.Diagnostics;
using System.Globalization;

namespace CellCompiler.Io;

/// <summary>
/// The one way this tool replaces a file: write a temporary sibling `.NAME.PID.tmp`, flush it to the
/// disk, rename it over NAME. A reader never sees half a file, and a failure leaves the old file as
/// it was. Temporary siblings left by killed runs (their process is gone) are removed on the next write.
/// </summary>
public static class AtomicFile
{
    private const string Suffix = ".tmp";

    public static void Write(string path, ReadOnlySpan<byte> bytes)
    {
        var copy = bytes.ToArray();
        Write(path, stream => stream.Write(copy));
    }

    /// <summary>Streams the content into the temporary file, then renames it over <paramref name="path"/>.</summary>
    public static void Write(string path, Action<Stream> write) => Write<int>(path, stream => { write(stream); return 0; });

    public static T Write<T>(string path, Func<Stream, T> write)
    {
        var requested = Path.GetFullPath(path);
        if (Directory.Exists(requested))
            throw new OutputException($"{path}: is a folder; give a file name");
        // Checked before links are resolved: /dev/stdout links to /proc/self/fd/1, whose target is no path.
        if (FileKind.IsSpecial(requested))
            return WriteInPlace(path, requested, write);
        var full = FinalTarget(requested);
        var directory = Path.GetDirectoryName(full)!;
        if (!Directory.Exists(directory))
            throw new OutputException($"{path}: the folder {directory} does not exist");
        RemoveStale(full);
        var temporary = TemporaryFor(full);
        try
        {
            T result;
            using (var stream = new FileStream(temporary, FileMode.Create, FileAccess.Write, FileShare.None, 1 << 16))
            {
                result = write(stream);
                stream.Flush(flushToDisk: true);
            }
            File.Move(temporary, full, overwrite: true);
            return result;
        }
        catch (Exception e) when (e is IOException or UnauthorizedAccessException)
        {
            TryDelete(temporary);
            throw new OutputException($"{path}: cannot write the file: {e.Message}", e);
        }
        catch
        {
            TryDelete(temporary);
            throw;
        }
    }

    /// <summary>A symbolic link is written through: its target is replaced, the link stays a link.</summary>
    private static string FinalTarget(string fullPath)
    {
        try
        {
            var target = new FileInfo(fullPath).ResolveLinkTarget(returnFinalTarget: true);
            return target is null ? fullPath : Path.GetFullPath(target.FullName);
        }
        catch (IOException) { return fullPath; } // a link loop: the rename below reports it
    }

    /// <summary>
    /// A device or a pipe (`-o /dev/stdout`, `-o /dev/null`, a named pipe) is written directly: it
    /// cannot be replaced by a rename, and a reader of it sees the stream as it comes anyway.
    /// </summary>
    private static T WriteInPlace<T>(string path, string full, Func<Stream, T> write)
    {
        try
        {
            using var stream = new FileStream(full, FileMode.Open, FileAccess.Write, FileShare.ReadWrite, 1 << 16);
            var result = write(stream);
            stream.Flush();
            return result;
        }
        catch (Exception e) when (e is IOException or UnauthorizedAccessException)
        {
            throw new OutputException($"{path}: cannot write: {e.Message}", e);
        }
    }

    /// <summary>The temporary sibling this process writes for <paramref name="fullPath"/>.</summary>
    public static string TemporaryFor(string fullPath) =>
        Path.Combine(Path.GetDirectoryName(fullPath)!,
            string.Create(CultureInfo.InvariantCulture, $".{Path.GetFileName(fullPath)}.{Environment.ProcessId}{Suffix}"));

    /// <summary>Removes `.NAME.PID.tmp` siblings of <paramref name="fullPath"/> whose process no longer runs.</summary>
    public static void RemoveStale(string fullPath)
    {
        var directory = Path.GetDirectoryName(fullPath)!;
        var prefix = $".{Path.GetFileName(fullPath)}.";
        IEnumerable<string> candidates;
        try { candidates = Directory.EnumerateFiles(directory, prefix + "*" + Suffix).ToList(); }
        catch (Exception e) when (e is IOException or UnauthorizedAccessException) { return; }
        foreach (var file in candidates)
        {
            var middle = Path.GetFileName(file)[prefix.Length..^Suffix.Length];
            if (int.TryParse(middle, NumberStyles.None, CultureInfo.InvariantCulture, out var pid) && !ProcessIsRunning(pid))
                TryDelete(file);
        }
    }

    /// <summary>Whether a process with this id runs now (the owner of a temporary file, if the id was not reused).</summary>
    public static bool ProcessIsRunning(int pid)
    {
        if (pid == Environment.ProcessId) return true;
        try
        {
            using var process = Process.GetProcessById(pid);
            return !process.HasExited;
        }
        catch (ArgumentException) { return false; }
        catch (InvalidOperationException) { return false; }
    }

    public static void TryDelete(string path)
    {
        try { File.Delete(path); } catch (IOException) { } catch (UnauthorizedAccessException) { }
    }
}
