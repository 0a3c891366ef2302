using System.Reflection.PortableExecutable;
using CellCompiler.Tests.Support;

namespace CellCompiler.Tests;

/// <summary>
/// The installable tool (issue 11, Installing): `dotnet pack` makes a .NET tool package of `cellc`,
/// ahead-of-time compiled for linux-x64 (issue 10, fast start); it installs into a tool path and
/// runs from there as a plain command, without `dotnet run`.
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
    public void The_installed_tool_and_library_are_ReadyToRun_images()
    {
        // ReadyToRun format (dotnet/runtime, docs/design/coreclr/botr/readytorun-format.md; from memory): precompiled
        // code is found through the CLI header's ManagedNativeHeader directory, which an IL-only assembly leaves empty.
        // The control below shows the check tells the two apart on this very build.
        foreach (var name in new[] { "cellc.dll", "CellCompiler.dll" })
        {
            Assert.True(HasReadyToRunCode(Path.Combine(cellc.InstalledFolder, name)), $"installed {name} has no ReadyToRun code");
            // Control: the ordinary (JIT) build of the same assembly has none, so the check can tell them apart.
            Assert.False(HasReadyToRunCode(Path.Combine(AppContext.BaseDirectory, name)), $"the test build's {name} is not IL-only");
        }
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

    private static bool HasReadyToRunCode(string path)
    {
        using var reader = new PEReader(File.OpenRead(path));
        return reader.PEHeaders.CorHeader!.ManagedNativeHeaderDirectory.Size > 0;
    }
}
