using System.Text;

namespace CellCompiler.TorchExport;

/// <summary>A tensor inside a generated forward method: its variable and its channel count.</summary>
/// <param name="Pooled">Height and width are 1 (after a global average pool), so flattening keeps the channel count.</param>
/// <param name="Flat">A [N, features] tensor (after a flatten).</param>
internal sealed record PyTensor(string Variable, PyChannels Channels, bool Pooled = false, bool Flat = false);

/// <summary>
/// One torch.nn.Module subclass being written: its submodules (constructed in __init__ at module
/// paths below self) and its forward lines. Submodule paths are checked here, once: each segment
/// a plain identifier that no nn.Module member shadows, no path registered twice, and groups of
/// layers (e.g. an inverted bottleneck's `se`) created as empty nn.Module containers on first use.
/// </summary>
internal sealed class PyClass
{
    private readonly List<string> _init = [];
    private readonly List<string> _forward = [];
    private readonly Dictionary<string, bool> _paths = new(StringComparer.Ordinal); // path -> is a container
    private readonly HashSet<string> _variables;

    /// <param name="parameters">The constructor's parameters after self, e.g. ["c"].</param>
    /// <param name="inputs">The forward method's parameters after self, e.g. ["x"].</param>
    public PyClass(string name, IReadOnlyList<string> docLines, IReadOnlyList<string> parameters, IReadOnlyList<string> inputs)
    {
        foreach (var line in docLines)
            if (line.Contains("\"\"\"", StringComparison.Ordinal) || line.Contains('\\') || line.Any(char.IsControl))
                throw new InvalidOperationException($"{name}: a docstring line may not hold quotes, backslashes or control characters: {line}");
        Name = name;
        DocLines = docLines;
        Parameters = parameters;
        Inputs = inputs;
        _variables = new HashSet<string>(["self", "torch", "nn", .. parameters, .. inputs], StringComparer.Ordinal);
    }

    public string Name { get; }
    public IReadOnlyList<string> DocLines { get; }
    public IReadOnlyList<string> Parameters { get; }
    public IReadOnlyList<string> Inputs { get; }

    public int ModuleCount => _paths.Count;

    /// <summary>Registers a submodule at <paramref name="path"/> built by <paramref name="constructor"/>; returns how forward calls it.</summary>
    public string Module(IReadOnlyList<string> path, string constructor)
    {
        Register(path, constructor, container: false);
        return "self." + string.Join('.', path);
    }

    /// <summary>A module that holds others (an nn.Sequential stage); its children are registered below it.</summary>
    public string Container(IReadOnlyList<string> path, string constructor)
    {
        Register(path, constructor, container: true);
        return "self." + string.Join('.', path);
    }

    private void Register(IReadOnlyList<string> path, string constructor, bool container)
    {
        if (path.Count == 0) throw new InvalidOperationException($"{Name}: a submodule needs a name");
        foreach (var segment in path)
            if (!PyText.IsModuleAttribute(segment))
                throw new InvalidOperationException($"{Name}: '{segment}' cannot name a submodule (not an identifier, or an nn.Module member)");
        for (var depth = 1; depth < path.Count; depth++)
        {
            var parent = string.Join('.', path.Take(depth));
            if (_paths.TryGetValue(parent, out var isContainer))
            {
                if (!isContainer) throw new InvalidOperationException($"{Name}: '{parent}' is a layer and cannot hold '{string.Join('.', path)}'");
                continue;
            }
            _paths[parent] = true;
            _init.Add($"self.{parent} = nn.Module()");
        }
        var key = string.Join('.', path);
        if (!_paths.TryAdd(key, container))
            throw new InvalidOperationException($"{Name}: two layers are named '{key}'");
        _init.Add($"self.{key} = {constructor}");
    }

    /// <summary>A fresh forward variable named after <paramref name="hint"/> (e.g. a layer path), suffixed if taken.</summary>
    public string Variable(IEnumerable<string> hint)
    {
        var baseName = PyText.Sanitize(string.Join('_', hint) is { Length: > 0 } joined ? joined : "y");
        var name = baseName;
        for (var n = 2; !_variables.Add(name); n++)
            name = $"{baseName}_{n}";
        return name;
    }

    public void InitComment(string text) => _init.Add("# " + text);

    public void Forward(string line) => _forward.Add(line);

    public void ForwardComment(string text) => _forward.Add("# " + text);

    public void Write(StringBuilder output, string result)
    {
        output.Append("class ").Append(Name).Append("(nn.Module):\n");
        output.Append("    \"\"\"").Append(DocLines[0]).Append('\n');
        if (DocLines.Count > 1)
        {
            output.Append('\n');
            foreach (var line in DocLines.Skip(1))
                output.Append(line.Length == 0 ? "" : "    " + line).Append('\n');
        }
        output.Append("    \"\"\"\n\n");
        output.Append("    def __init__(").Append(string.Join(", ", ["self", .. Parameters])).Append("):\n");
        output.Append("        super().__init__()\n");
        foreach (var line in _init)
            output.Append("        ").Append(line).Append('\n');
        output.Append('\n');
        output.Append("    def forward(").Append(string.Join(", ", ["self", .. Inputs])).Append("):\n");
        foreach (var line in _forward)
            output.Append("        ").Append(line).Append('\n');
        output.Append("        return ").Append(result).Append('\n');
    }
}
