using System.Reflection;

namespace CellCompiler;

/// <summary>
/// This build's version (Directory.Build.props, the same for the library and `cellc --version`)
/// and the commit it was built from (set by the build from the git checkout, "unknown" outside one).
/// </summary>
public static class BuildInfo
{
    public const string UnknownCommit = "unknown";

    private static readonly Assembly Library = typeof(BuildInfo).Assembly;

    public static string Version { get; } =
        Library.GetCustomAttribute<AssemblyInformationalVersionAttribute>()?.InformationalVersion
        ?? throw new InvalidOperationException("the library carries no informational version");

    public static string Commit { get; } =
        Library.GetCustomAttributes<AssemblyMetadataAttribute>().FirstOrDefault(a => a.Key == "CellcCommit")?.Value is { Length: > 0 } commit
            ? commit
            : UnknownCommit;
}
