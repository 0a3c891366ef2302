namespace CellCompiler.Tests.Support;

/// <summary>Locations inside the repository, found from the test assembly's folder.</summary>
public static class RepoPaths
{
    public static string Root { get; } = FindRoot();

    public static string Fixture(string name) => Path.Combine(Root, "fixtures", name);

    public static string ReferenceScript(string name) => Path.Combine(Root, "tests", "reference", name);

    /// <summary>The built CLI, copied next to the tests because the test project references it.</summary>
    public static string CliDll { get; } = Path.Combine(AppContext.BaseDirectory, "cellc.dll");

    private static string FindRoot()
    {
        for (var dir = new DirectoryInfo(AppContext.BaseDirectory); dir is not null; dir = dir.Parent)
            if (File.Exists(Path.Combine(dir.FullName, "CellCompiler.sln")))
                return dir.FullName;
        throw new InvalidOperationException("repository root (CellCompiler.sln) not found above " + AppContext.BaseDirectory);
    }
}
