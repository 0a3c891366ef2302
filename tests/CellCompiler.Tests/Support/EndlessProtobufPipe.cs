namespace CellCompiler.Tests.Support;

/// <summary>
/// A named pipe with a writer that sends valid protobuf forever (field 4 as a varint, again and
/// again: an unknown field every reader skips), so that only a reader's size limit can stop it.
/// The writer ends when the reader closes the pipe, or after 1 GiB.
/// </summary>
public sealed class EndlessProtobufPipe
{
    private long _written;

    public string Path { get; }

    /// <summary>The writer; a TimeoutException from awaiting it means it never saw the pipe close.</summary>
    public Task Writer { get; }

    /// <summary>Bytes handed to the pipe so far (the reader's limit plus at most the pipe's buffer, once it has stopped).</summary>
    public long Written => Interlocked.Read(ref _written);

    public EndlessProtobufPipe(TempFolder folder, string name)
    {
        Path = folder.File(name);
        Assert.Equal(0, ProcessRunner.Run("mkfifo", [Path]).ExitCode);
        Writer = Task.Run(() =>
        {
            var chunk = Enumerable.Repeat(new byte[] { 0x20, 0x0A }, 32 * 1024).SelectMany(b => b).ToArray();
            try
            {
                using var stream = new FileStream(Path, FileMode.Open, FileAccess.Write);
                while (Written < 1L << 30)
                {
                    stream.Write(chunk);
                    Interlocked.Add(ref _written, chunk.Length);
                }
            }
            catch (IOException) { }   // the reader closed the pipe: what we want
        });
    }
}
