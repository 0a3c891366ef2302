using System.Diagnostics;
using System.Text;
using CellCompiler.Io;
using CellCompiler.Tests.Support;

namespace CellCompiler.Tests;

/// <summary>
/// The one file writer replaces regular files through a temporary sibling and a rename. A symbolic
/// link must stay a link (its target is replaced), and a named pipe or a device must be written
/// to, never replaced by a regular file (`-o /dev/stdout` is common practice in shell pipelines).
/// </summary>
public sealed class AtomicFileTests
{
    private static string FileType(string path)
    {
        // GNU coreutils stat: %F names the file type ("regular file", "fifo", "symbolic link").
        var info = new ProcessStartInfo("stat", ["-c", "%F", path]) { RedirectStandardOutput = true };
        using var process = Process.Start(info)!;
        var type = process.StandardOutput.ReadToEnd().Trim();
        process.WaitForExit();
        return type;
    }

    [Fact]
    public void A_symbolic_link_stays_a_link_and_its_target_gets_the_content()
    {
        using var folder = new TempFolder();
        Directory.CreateDirectory(folder.File("data"));
        File.WriteAllText(folder.File("data/real.jsonl"), "old\n");
        File.CreateSymbolicLink(folder.File("link.jsonl"), folder.File("data/real.jsonl"));

        AtomicFile.Write(folder.File("link.jsonl"), "new\n"u8);

        Assert.Equal("symbolic link", FileType(folder.File("link.jsonl")));
        Assert.Equal("new\n", File.ReadAllText(folder.File("data/real.jsonl")));
        Assert.Empty(Directory.GetFiles(folder.File("data"), "*.tmp"));
    }

    [Fact]
    public async Task A_named_pipe_is_written_to_and_stays_a_pipe()
    {
        using var folder = new TempFolder();
        var pipe = folder.File("results.pipe");
        using (var mkfifo = Process.Start("mkfifo", [pipe])) mkfifo.WaitForExit();
        Assert.Equal("fifo", FileType(pipe));

        // Opening a pipe for reading waits for its writer: read on another thread, bounded in time.
        var reader = Task.Run(() => File.ReadAllText(pipe));
        AtomicFile.Write(pipe, Encoding.UTF8.GetBytes("{\"id\":\"a\"}\n"));
        var text = await reader.WaitAsync(TimeSpan.FromSeconds(30));

        Assert.Equal("{\"id\":\"a\"}\n", text);
        Assert.Equal("fifo", FileType(pipe));
    }
}
