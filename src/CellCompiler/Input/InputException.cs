namespace CellCompiler.Input;

/// <summary>
/// Bad user input: names the file, the JSON path inside it and what is wrong.
/// Every stage reports bad input through this type so the CLI can map it to exit code 2.
/// </summary>
public sealed class InputException : Exception
{
    public InputException(string source, string jsonPath, string problem)
        : base(Format(source, jsonPath, problem))
    {
        Origin = source;
        JsonPath = jsonPath;
        Problem = problem;
    }

    /// <summary>The file name, "<stdin>", "line N of FILE" or "command line".</summary>
    public string Origin { get; }

    /// <summary>Path inside the JSON document, e.g. levels[1].motifs.cell.edges[3]; empty for the whole document.</summary>
    public string JsonPath { get; }

    public string Problem { get; }

    private static string Format(string source, string jsonPath, string problem) =>
        jsonPath.Length == 0 ? $"{source}: {problem}" : $"{source}: {jsonPath}: {problem}";
}
