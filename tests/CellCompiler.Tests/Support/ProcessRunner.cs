using System.Diagnostics;

namespace CellCompiler.Tests.Support;

public sealed record ProcessResult(int ExitCode, string Stdout, string Stderr);

/// <summary>Runs a child process to completion with a hard time limit, capturing its output.</summary>
public static class ProcessRunner
{
    public static ProcessResult Run(string fileName, IEnumerable<string> args, string? stdin = null,
        string? workingDirectory = null, TimeSpan? timeout = null, IReadOnlyDictionary<string, string>? environment = null)
    {
        var info = new ProcessStartInfo(fileName)
        {
            RedirectStandardOutput = true,
            RedirectStandardError = true,
            RedirectStandardInput = true,
            UseShellExecute = false,
            WorkingDirectory = workingDirectory ?? Environment.CurrentDirectory,
        };
        foreach (var arg in args) info.ArgumentList.Add(arg);
        foreach (var (name, value) in environment ?? new Dictionary<string, string>()) info.Environment[name] = value;
        using var process = Process.Start(info)!;
        var stdout = process.StandardOutput.ReadToEndAsync();
        var stderr = process.StandardError.ReadToEndAsync();
        if (stdin is not null) process.StandardInput.Write(stdin);
        process.StandardInput.Close();
        if (!process.WaitForExit(timeout ?? TimeSpan.FromMinutes(10)))
        {
            process.Kill(entireProcessTree: true);
            throw new TimeoutException($"{fileName} {string.Join(' ', args)} did not finish in time");
        }
        process.WaitForExit();
        return new ProcessResult(process.ExitCode, stdout.Result, stderr.Result);
    }

    /// <summary>Runs the cellc CLI exactly as a user would, through the dotnet host.</summary>
    public static ProcessResult Cellc(params string[] args) => Cellc(args, null, null);

    public static ProcessResult Cellc(IEnumerable<string> args, string? stdin, string? workingDirectory) =>
        Run("dotnet", new[] { RepoPaths.CliDll }.Concat(args), stdin, workingDirectory, TimeSpan.FromMinutes(2));
}
