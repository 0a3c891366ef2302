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
        if (OperatingSystem.IsLinux() && !File.Exists("/proc/self/fd/0"))
            throw new Input.InputException("<stdin>", "", "standard input is closed; give a file, or pipe the population into cellc");
        var stream = Console.OpenStandardInput();
        return stream == Stream.Null
            ? throw new Input.InputException("<stdin>", "", "standard input is closed; give a file, or pipe the population into cellc")
            : stream;
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
