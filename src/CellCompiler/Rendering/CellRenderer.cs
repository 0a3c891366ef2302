using CellCompiler.Input;

namespace CellCompiler.Rendering;

/// <summary>
/// Pictures of a genotype (issue 5, `cellc render`): the cell and every motif it uses through
/// live edges, nodes in topological order, edges labelled with their op, merges marked, dead
/// nodes and edges faded; unused and dead motifs are named in a note but not drawn.
/// </summary>
public static class CellRenderer
{
    /// <summary>A self-contained SVG document (embedded CSS for light and dark themes, no external references).</summary>
    public static string Svg(Genotype genotype) => SvgWriter.Write(RenderModel.Build(genotype));

    /// <summary>A Graphviz digraph with one cluster per drawn motif.</summary>
    public static string Dot(Genotype genotype) => DotWriter.Write(RenderModel.Build(genotype));
}
