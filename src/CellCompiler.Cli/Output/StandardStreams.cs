namespace CellCompiler.Cli.Output;

/// <summary>
/// Standard output and input as this tool uses them: a closed or unwritable standard output is one
/// plain <see cref="OutputException"/> (exit 2), and a closed standard input is bad input, never a
/// wait for data that cannot come.
/// </summary>
public static class StandardStreams
{
    /// <summary>Standard output as a stream whose write failures say what failed.</summary>
    public static Stream Output() => new GuardedStream(Console.OpenStandardOutput());

    /// <summary>A text writer for standard output with the same guard, flushed on every write.</summary>
    public static TextWriter OutputWriter() =>
        TextWriter.Synchronized(new StreamWriter(Output(), new System.Text.UTF8Encoding(false), 4096) { AutoFlush = true, NewLine = "\n" });

    /// <summary>Standard input; refused when it is closed (a process started with its standard input shut).</summary>
    public static Stream Input()
    {
        if (StandardInputIsClosed())
            throw new Input.InputException("<stdin>", "", "standard input is closed; give a file, or pipe the population into cellc");
        var stream = Console.OpenStandardInput();
        return stream == Stream.Null
            ? throw new Input.InputException("<stdin>", "", "standard input is closed; give a file, or pipe the population into cellc")
            : stream;
    }

    /// <summary>
    /// On Linux: descriptor 0 is missing, or was opened by this process itself after start (it carries
    /// close-on-exec, which an inherited standard input never does): the runtime reuses the number of a
    /// closed standard input for its own pipes, and reading that would wait forever.
    /// </summary>
    private static bool StandardInputIsClosed()
    {
        if (!OperatingSystem.IsLinux()) return false;
        try
        {
            if (!File.Exists("/proc/self/fd/0")) return true;
            foreach (var line in File.ReadLines("/proc/self/fdinfo/0"))
            {
                if (!line.StartsWith("flags:", StringComparison.Ordinal)) continue;
                const int closeOnExec = 0x80000; // O_CLOEXEC, 02000000 octal
                return (Convert.ToInt32(line["flags:".Length..].Trim(), 8) & closeOnExec) != 0;
            }
        }
        catch (Exception e) when (e is IOException or UnauthorizedAccessException or FormatException) { }
        return false;
    }

    private sealed class GuardedStream(Stream inner) : Stream
    {
        public override void Write(byte[] buffer, int offset, int count) => Guard(() => inner.Write(buffer, offset, count));
        public override void Write(ReadOnlySpan<byte> buffer)
        {
            var copy = buffer.ToArray();
            Guard(() => inner.Write(copy));
        }
        public override void Flush() => Guard(inner.Flush);

        private static void Guard(Action write)
        {
            try { write(); }
            catch (Exception e) when (e is IOException or UnauthorizedAccessException or ObjectDisposedException)
            {
                throw new OutputException($"cannot write to standard output (it is closed or not writable): {e.Message}", e);
            }
        }

        public override bool CanRead => false;
        public override bool CanSeek => false;
        public override bool CanWrite => true;
        public override long Length => throw new NotSupportedException();
        public override long Position { get => throw new NotSupportedException(); set => throw new NotSupportedException(); }
        public override int Read(byte[] buffer, int offset, int count) => throw new NotSupportedException();
        public override long Seek(long offset, SeekOrigin origin) => throw new NotSupportedException();
        public override void SetLength(long value) => throw new NotSupportedException();

        protected override void Dispose(bool disposing)
        {
            if (disposing) inner.Dispose();
            base.Dispose(disposing);
        }
    }
}
