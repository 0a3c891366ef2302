namespace CellCompiler.TorchExport;

/// <summary>Python class names for primitives and motifs: a fixed prefix and the genotype's name, unique within the file.</summary>
internal sealed class ClassNames
{
    private readonly HashSet<string> _taken = new(StringComparer.Ordinal) { "Network", "WeightLoadError" };

    public string Take(string prefix, string name)
    {
        var baseName = prefix + "_" + PyText.Sanitize(name).TrimStart('_');
        var result = baseName;
        for (var n = 2; !_taken.Add(result); n++)
            result = $"{baseName}_{n}";
        return result;
    }
}
