using CellCompiler.Input;
using CellCompiler.Vocabulary;

namespace CellCompiler.TorchExport;

/// <summary>
/// One class per primitive definition a network uses, written by lowering the definition into a
/// <see cref="TorchLayerSink"/>: whatever layers a kind lowers to, the class holds exactly those.
/// Names that share a definition share its class.
/// </summary>
internal static class PrimitiveClasses
{
    /// <summary>Writes the classes into <paramref name="classes"/>; returns the class of each used primitive name.</summary>
    public static IReadOnlyDictionary<string, string> Write(Genotype genotype, IReadOnlySet<string> used, ClassNames names, List<(PyClass Class, string Result)> classes)
    {
        var table = genotype.Primitives;
        var byDefinition = new Dictionary<PrimitiveDefinition, List<string>>();
        foreach (var name in table.Names.Where(used.Contains))
        {
            var definition = table.Get(name);
            if (byDefinition.TryGetValue(definition, out var sharing)) sharing.Add(name);
            else byDefinition[definition] = [name];
        }

        var classOf = new Dictionary<string, string>(StringComparer.Ordinal);
        foreach (var (definition, sharingNames) in byDefinition)
        {
            var className = names.Take("Primitive", sharingNames[0]);
            var cls = new PyClass(className,
            [
                $"{string.Join(", ", sharingNames)}: {definition.Describe()}.",
                $"Definition {definition.Key}. c is the cell's channel count C, also the input channels Cin.",
            ], ["c"], ["x"]);
            var cell = PyChannels.Symbol("c");
            var result = definition.Lower(new TorchLayerSink(cls, [], cell), new PyTensor("x", cell));
            classes.Add((cls, result.Variable));
            foreach (var name in sharingNames) classOf[name] = className;
        }
        return classOf;
    }
}
