using CellCompiler.Tests.Support;

namespace CellCompiler.Tests;

/// <summary>
/// The installable tool (issue 11, Installing): `dotnet pack` makes a .NET tool package of `cellc`,
/// a Native AOT program for linux-x64 (issue 10, fast start); it installs into a tool path and
/// runs from there as a plain command, without `dotnet run` and without a .NET runtime.
/// </summary>
[Collection(PackagedCellc.Collection)]
public sealed class PackageTests(PackagedCellc cellc)
{
    [Fact]
    public void Pack_makes_the_tool_package_and_its_linux_x64_package()
    {
        // .NET 10 SDK, RID-specific tools: a small pointer package plus one package per runtime identifier.
        Assert.Equal(
            new[] { $"cellc.{cellc.Version}.nupkg", $"cellc.linux-x64.{cellc.Version}.nupkg" },
            cellc.Packages.Order(StringComparer.Ordinal));
        Assert.Contains("cellc", cellc.InstallOutput);
    }

    [Fact]
    public void The_installed_command_reports_the_same_version_as_the_build()
    {
        var installed = cellc.Run(["--version"]);
        Assert.Equal(0, installed.ExitCode);
        var built = ProcessRunner.Cellc("--version");
        Assert.Equal(0, built.ExitCode);
        // The informational version carries the commit (e.g. "1.0.0+c3e9638..."): the same source, packed.
        Assert.Equal(built.Stdout.Trim(), installed.Stdout.Trim());
        Assert.Matches(@"^\d+\.\d+\.\d+", installed.Stdout.Trim());
    }

    [Fact]
    public void The_installed_tool_is_the_native_program_without_managed_code()
    {
        // The command is a link to the package's executable itself, not to a launcher that starts a .NET runtime.
        var target = Path.Combine(cellc.InstalledFolder, "cellc");
        Assert.Equal(target, new FileInfo(cellc.Executable).ResolveLinkTarget(returnFinalTarget: true)?.FullName);
        // ELF header (System V ABI, from memory): 0x7F 'E' 'L' 'F'.
        Assert.Equal(new byte[] { 0x7F, (byte)'E', (byte)'L', (byte)'F' }, File.ReadAllBytes(target)[..4]);
        Assert.Equal(
            ["DotnetToolSettings.xml", "cellc", "libe_sqlite3.so", "libonnxruntime.so", "libonnxruntime_providers_shared.so"],
            Directory.GetFiles(cellc.InstalledFolder).Select(Path.GetFileName).Order(StringComparer.Ordinal));
        // Control: the ordinary build the tests run is managed code (cellc.dll), so the listing above tells the two apart.
        Assert.True(File.Exists(Path.Combine(AppContext.BaseDirectory, "cellc.dll")));
    }

    [Fact]
    public void The_installed_tool_writes_the_same_model_as_the_build()
    {
        using var folder = new TempFolder();
        var genotype = RepoPaths.Fixture("tidepool-h3.json");
        var installed = cellc.Run(["compile", genotype, "-o", folder.File("installed.onnx")]);
        Assert.Equal(0, installed.ExitCode);
        var built = ProcessRunner.Cellc("compile", genotype, "-o", folder.File("built.onnx"));
        Assert.Equal(0, built.ExitCode);
        Assert.Equal(File.ReadAllBytes(folder.File("built.onnx")), File.ReadAllBytes(folder.File("installed.onnx")));
        Assert.Equal(built.Stdout.Replace("built.onnx", "X"), installed.Stdout.Replace("installed.onnx", "X"));
    }

    [Fact]
    public void The_installed_tool_finds_onnx_runtime_and_sqlite_through_its_link()
    {
        // The command on PATH is a link into the package folder; the native libraries are found beside its target.
        using var folder = new TempFolder();
        var check = cellc.Run(["check", RepoPaths.Fixture("tidepool-h3.json"), "--json", "--cache", folder.File("cache.db")], workingDirectory: folder.Path);
        Assert.True(check.ExitCode == 0, check.Stderr);
        var record = System.Text.Json.Nodes.JsonNode.Parse(check.Stdout)!;
        Assert.Equal("ok", (string)record["status"]!);
        Assert.True((bool)record["smoke_tested"]!);
        Assert.True(new FileInfo(folder.File("cache.db")).Length > 0);
    }
}
