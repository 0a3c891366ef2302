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

/// <summary>A validated hierarchical genotype (contract section 1). The last level holds only the cell.</summary>
public sealed record Genotype(string Name, IReadOnlyList<Level> Levels, string? Id = null)
{
    public Motif Cell => Levels[^1].Motifs[0];
    public int TopLevel => Levels.Count - 1;
}
