namespace CellCompiler.Input;

/// <summary>
/// Size of the fully expanded cell, counted bottom-up without expanding anything, so hostile
/// genotypes (motifs used thousands of times per level) are rejected in microseconds.
/// </summary>
public static class ExpansionSize
{
    /// <summary>Primitive ops (identity included, none excluded) in one expanded cell, saturating just above the limit.</summary>
    public static long CellPrimitiveOps(Genotype genotype)
    {
        const long cap = Limits.MaxExpandedPrimitiveOps + 1;
        Dictionary<string, long>? below = null;
        for (var k = 0; k < genotype.Levels.Count; k++)
        {
            var counts = new Dictionary<string, long>(StringComparer.Ordinal);
            foreach (var motif in genotype.Levels[k].Motifs)
            {
                long total = 0;
                foreach (var edge in motif.Edges)
                {
                    var size = edge.Op switch
                    {
                        Primitives.None => 0,
                        _ when below is null || edge.Op == Primitives.Identity => 1,
                        _ => below[edge.Op],
                    };
                    total = Math.Min(total + size, cap);
                }
                counts[motif.Name] = total;
            }
            below = counts;
        }
        return below![genotype.Cell.Name];
    }
}
