using System.Text.Json;

namespace CellCompiler.Tests.Support;

/// <summary>
/// Runs the Python reference scripts under tests/reference with Debian's /usr/bin/python3.
/// A missing interpreter or library fails the test; it never skips.
/// </summary>
public static class PythonReference
{
    public const string Python = "/usr/bin/python3";

    public static IReadOnlyList<JsonElement> RunJsonLines(string script, params string[] args)
    {
        Assert.True(File.Exists(Python), $"{Python} is missing; .ci/run installs python3-onnx and python3-torch");
        var result = ProcessRunner.Run(Python, new[] { RepoPaths.ReferenceScript(script) }.Concat(args), timeout: TimeSpan.FromMinutes(20));
        Assert.True(result.ExitCode is 0 or 1,
            $"{script} failed with exit code {result.ExitCode} (3 means the reference library is not installed):\n{result.Stderr}");
        return result.Stdout.Split('\n', StringSplitOptions.RemoveEmptyEntries)
            .Select(line => JsonDocument.Parse(line).RootElement.Clone())
            .ToList();
    }
}
