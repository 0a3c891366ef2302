using System.Xml.Linq;

namespace CellCompiler.Tests.Support;

/// <summary>
/// `cellc` as a user installs it (README, Installing): `dotnet pack` of the CLI project, then
/// `dotnet tool install --tool-path` from the package folder. Built once for the tests that need
/// it. The build goes to its own artifacts folder, so the repository's bin and obj folders (and
/// the other tests using them) are not touched; the package gets a version of its own, so the
/// install can never pick up an earlier package from NuGet's caches.
/// </summary>
public sealed class PackagedCellc : IDisposable
{
    public const string Collection = "packaged cellc";

    private readonly TempFolder _folder = new();

    public PackagedCellc()
    {
        PackageFolder = _folder.File("packages");
        ToolPath = _folder.File("tools");
        Version = $"0.0.0-test.{DateTime.UtcNow:yyyyMMddHHmmss}.{Environment.ProcessId}";

        var pack = ProcessRunner.Run("dotnet",
            ["pack", Path.Combine(RepoPaths.Root, "src", "CellCompiler.Cli"), "-c", "Release", "-o", PackageFolder,
             "--artifacts-path", _folder.File("artifacts"), $"-p:PackageVersion={Version}", "-nologo"],
            timeout: TimeSpan.FromMinutes(20));
        Require(pack, "dotnet pack");
        Packages = Directory.GetFiles(PackageFolder, "*.nupkg").Select(Path.GetFileName).ToList()!;

        // Only the package folder as a source: the install must come from what was just packed.
        var config = _folder.File("nuget.config");
        new XDocument(new XElement("configuration", new XElement("packageSources",
            new XElement("clear"), new XElement("add", new XAttribute("key", "cellc-test"), new XAttribute("value", PackageFolder)))))
            .Save(config);
        var install = ProcessRunner.Run("dotnet",
            ["tool", "install", "cellc", "--tool-path", ToolPath, "--version", Version, "--configfile", config],
            timeout: TimeSpan.FromMinutes(5));
        Require(install, "dotnet tool install");
        InstallOutput = install.Stdout;
        Executable = Path.Combine(ToolPath, "cellc");
    }

    public string PackageFolder { get; }
    public string ToolPath { get; }
    public string Version { get; }
    public IReadOnlyList<string> Packages { get; }
    public string InstallOutput { get; }

    /// <summary>The `cellc` command the install put into the tool path.</summary>
    public string Executable { get; }

    /// <summary>The folder of the installed tool's files (the command is a link into it).</summary>
    public string InstalledFolder =>
        Path.GetDirectoryName(new FileInfo(Executable).ResolveLinkTarget(returnFinalTarget: true)?.FullName ?? Executable)!;

    public ProcessResult Run(IEnumerable<string> args, string? workingDirectory = null) =>
        ProcessRunner.Run(Executable, args, workingDirectory: workingDirectory, timeout: TimeSpan.FromMinutes(2));

    private static void Require(ProcessResult result, string what)
    {
        if (result.ExitCode != 0)
            throw new InvalidOperationException($"{what} failed (exit {result.ExitCode}):\n{result.Stdout}\n{result.Stderr}");
    }

    public void Dispose() => _folder.Dispose();
}

[CollectionDefinition(PackagedCellc.Collection)]
public sealed class PackagedCellcCollection : ICollectionFixture<PackagedCellc>;
