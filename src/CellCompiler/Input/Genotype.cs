using CellCompiler.Vocabulary;

namespace CellCompiler.Input;

/// <summary>One edge [from, to, op] of a motif; Index is its position in the file's edge list.</summary>
public sealed record Edge(int From, int To, string Op, int Index);

/// <summary>A small DAG shared-shape with its level: node 0 is the input, node Nodes-1 the output.</summary>
public sealed record Motif(string Name, IReadOnlyList<Edge> Edges);

/// <summary>One level of the hierarchy; motifs keep the order of the file.</summary>
public sealed record Level(int Nodes, IReadOnlyList<Motif> Motifs)
{
    public Motif? Find(string name)
    {
        foreach (var motif in Motifs)
            if (motif.Name == name) return motif;
        return null;
    }
}

/// <summary>
/// A validated hierarchical genotype (contract section 1). The last level holds only the cell.
/// <paramref name="Declarations"/> are the genotype's own primitives (contract 3.1; null: none);
/// <paramref name="Meta"/> is the user's `meta` object as compact JSON text, carried along unread.
/// </summary>
public sealed record Genotype(string Name, IReadOnlyList<Level> Levels, string? Id = null, PrimitiveTable? Declarations = null, string? Meta = null)
{
    public Motif Cell => Levels[^1].Motifs[0];
    public int TopLevel => Levels.Count - 1;

    /// <summary>Every primitive level 0 may use: the built-ins and the declarations.</summary>
    public PrimitiveTable Primitives => Declarations ?? PrimitiveTable.BuiltinsOnly;
}
