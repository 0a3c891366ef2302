using CellCompiler.Tests.Support;

namespace CellCompiler.Tests;

/// <summary>
/// Every reader stops at its size limit while reading (issue 10): an endless device or pipe given to
/// any command that reads a file ends, within a time limit, as exit 2 with one message naming the
/// path, and leaves no file behind. The process's managed heap is capped far below the 2 GiB a
/// model may have, so a reader that takes in the whole input before refusing it runs out of memory
/// and fails here. (Model readers refuse zeros at the first byte; an endless pipe that looks like
/// protobuf is read to the real 2 GiB limit by scripts/inspect-fuzz.sh, which takes half a minute,
/// and to a small one by <see cref="BenchInputTests"/> and InspectFuzzTests.)
/// </summary>
public sealed class SizeLimitTests
{
    /// <summary>256 MiB: a 1 MiB genotype or a refused model fits many times over; 2 GiB taken in does not.</summary>
    private static readonly Dictionary<string, string> HeapCap = new() { ["DOTNET_GCHeapHardLimit"] = "0x10000000" };

    private static readonly TimeSpan TimeLimit = TimeSpan.FromSeconds(90);

    private static readonly string[] Readers =
        ["compile", "compile --skeleton", "render", "scale", "scale --to", "bench genotype", "bench model", "inspect", "check --resume settings"];

    public static TheoryData<string, string> Cases()
    {
        var cases = new TheoryData<string, string>();
        foreach (var reader in Readers)
            foreach (var source in new[] { "/dev/zero", "endless pipe" })
                cases.Add(reader, source);
        return cases;
    }

    [Theory]
    [MemberData(nameof(Cases))]
    public void An_endless_input_is_refused_with_exit_2_naming_it(string reader, string source)
    {
        using var folder = new TempFolder();
        var fixture = RepoPaths.Fixture("tidepool-h3.json");
        var results = folder.File("results.jsonl");
        // The input under the name its reader expects: a link to /dev/zero, or to standard input fed through a pipe.
        var path = folder.File(reader switch
        {
            "bench model" or "inspect" => "endless.onnx",
            "check --resume settings" => "results.jsonl.settings",
            _ => "endless.json",
        });
        File.CreateSymbolicLink(path, source == "/dev/zero" ? "/dev/zero" : "/dev/stdin");
        string[] args = reader switch
        {
            "compile" => ["compile", path, "-o", folder.File("out.onnx")],
            "compile --skeleton" => ["compile", fixture, "--skeleton", path, "-o", folder.File("out.onnx")],
            "render" => ["render", path, "-o", folder.File("out.svg")],
            "scale" => ["scale", path, "-o", folder.Path],
            "scale --to" => ["scale", fixture, "--to", path, "-o", folder.Path],
            "bench genotype" or "bench model" => ["bench", path, "--warmup", "0", "--runs", "1"],
            "inspect" => ["inspect", path],
            _ => ["check", fixture, "--out", results, "--resume", "--no-cache"],
        };
        // A results file holding a record: --resume then reads the settings beside it.
        if (reader == "check --resume settings") File.WriteAllText(results, "{\"id\":\"x\"}\n");
        var before = Directory.GetFileSystemEntries(folder.Path).Order().ToList();

        var command = $"exec dotnet {Quote(RepoPaths.CliDll)} {string.Join(' ', args.Select(Quote))}";
        var result = ProcessRunner.Run("bash", ["-c", source == "/dev/zero" ? command : $"cat /dev/zero 2>/dev/null | {command}"],
            timeout: TimeLimit, environment: HeapCap);

        Assert.True(result.ExitCode == 2, $"exit {result.ExitCode}: {result.Stderr}");
        Assert.StartsWith($"cellc: error: {path}: ", result.Stderr, StringComparison.Ordinal);
        Assert.Single(result.Stderr.Split('\n', StringSplitOptions.RemoveEmptyEntries));
        Assert.Equal("", result.Stdout);
        // JSON readers stop at their limit (1 MiB; 16 MiB for settings); a model reader at the first byte that is no protobuf.
        var expected = reader switch
        {
            "bench model" or "inspect" => "not an ONNX model: the file is not a valid ONNX protobuf",
            "compile --skeleton" or "scale --to" => "it holds more than 1,048,576 bytes (1 MiB), the most a skeleton file may have (reading stopped)",
            "check --resume settings" => "it holds more than 16,777,216 bytes (16 MiB), the most the settings of an earlier run may have (reading stopped); start again without --resume",
            _ => "it holds more than 1,048,576 bytes (1 MiB), the most a genotype file may have (reading stopped)",
        };
        Assert.Contains(expected, result.Stderr, StringComparison.Ordinal);
        // Nothing written, not even half a file.
        Assert.Equal(before, Directory.GetFileSystemEntries(folder.Path).Order().ToList());
    }

    private static string Quote(string arg) => "'" + arg.Replace("'", "'\\''", StringComparison.Ordinal) + "'";
}
