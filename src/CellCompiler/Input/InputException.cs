namespace CellCompiler.Input;

/// <summary>One problem found in an input: where (a JSON path, empty for the whole document) and what.</summary>
public sealed record InputProblem(string JsonPath, string Problem)
{
    public string Describe(string origin) => JsonPath.Length == 0 ? $"{origin}: {Problem}" : $"{origin}: {JsonPath}: {Problem}";
}

/// <summary>
/// Bad user input: names the file, the JSON path inside it and what is wrong, for every problem
/// found (validation goes on after a problem where it can, up to <see cref="MaxProblems"/>).
/// Every stage reports bad input through this type so the CLI can map it to exit code 2.
/// </summary>
public sealed class InputException : Exception
{
    /// <summary>A file with many mistakes is reported this far; the rest usually follow from the first ones.</summary>
    public const int MaxProblems = 20;

    public InputException(string source, string jsonPath, string problem)
        : this(source, [new InputProblem(jsonPath, problem)])
    {
    }

    public InputException(string source, IReadOnlyList<InputProblem> problems)
        : base(string.Join("\n", problems.Select(p => p.Describe(source))))
    {
        if (problems.Count == 0) throw new ArgumentException("an input error needs at least one problem", nameof(problems));
        Origin = source;
        Problems = problems;
    }

    /// <summary>The file name, "&lt;stdin&gt;", "FILE line N" or "command line".</summary>
    public string Origin { get; }

    public IReadOnlyList<InputProblem> Problems { get; }

    /// <summary>Path of the first problem inside the JSON document, e.g. levels[1].motifs.cell.edges[3]; empty for the whole document.</summary>
    public string JsonPath => Problems[0].JsonPath;

    public string Problem => Problems[0].Problem;

    /// <summary>Every problem on one line ("; " between them), for a record's reason.</summary>
    public string OneLine => string.Join("; ", Problems.Select(p => p.Describe(Origin)));
}

/// <summary>Collects problems while validating, so that a file with two typos names both.</summary>
internal sealed class ProblemList(string origin)
{
    private readonly List<InputProblem> _problems = [];

    public bool Any => _problems.Count > 0;

    public bool Full => _problems.Count >= InputException.MaxProblems;

    /// <summary>Runs a validation step; its problem is recorded and validation goes on with the next step.</summary>
    public bool Try(Action step)
    {
        if (Full) return false;
        try
        {
            step();
            return true;
        }
        catch (InputException e)
        {
            foreach (var problem in e.Problems)
                if (!Full) _problems.Add(problem);
            return false;
        }
    }

    public T? Try<T>(Func<T> step) where T : class
    {
        T? result = null;
        Try(() => { result = step(); });
        return result;
    }

    public void Add(InputException e) => Try(() => throw e);

    /// <summary>Throws every problem found so far, if any.</summary>
    public void ThrowIfAny()
    {
        if (_problems.Count > 0) throw new InputException(origin, _problems.ToList());
    }
}
