using CellCompiler.Input;
using CellCompiler.Screening;

namespace CellCompiler.Reporting;

/// <summary>A drawn cell (an inline SVG element), or why it could not be drawn.</summary>
public sealed record CellPicture(string Id, string? Svg, string? Problem);

/// <summary>
/// Draws the cells of chosen candidates from a population file: the population is streamed with
/// <see cref="PopulationReader"/> (ids as `cellc check` gives them, `line-N` by default) and only the
/// wanted genotypes are drawn; reading stops once all are found. Ids not in the population are left out.
/// A drawing that fails becomes a <see cref="CellPicture.Problem"/>, never a failed report.
/// </summary>
public static class CellPictures
{
    public static IReadOnlyDictionary<string, CellPicture> Draw(string populationPath, IReadOnlyCollection<string> ids,
        Func<Genotype, string> draw)
    {
        var wanted = new HashSet<string>(ids, StringComparer.Ordinal);
        var pictures = new Dictionary<string, CellPicture>(StringComparer.Ordinal);
        if (wanted.Count == 0) return pictures;
        foreach (var candidate in PopulationReader.ReadFile(populationPath))
        {
            if (!wanted.Contains(candidate.Id) || pictures.ContainsKey(candidate.Id)) continue;
            pictures[candidate.Id] = Picture(candidate, pictures.Count, draw);
            if (pictures.Count == wanted.Count) break;
        }
        return pictures;
    }

    private static CellPicture Picture(Candidate candidate, int index, Func<Genotype, string> draw)
    {
        if (candidate.Genotype is not { } genotype)
            return new CellPicture(candidate.Id, null, $"the genotype does not read: {candidate.Error?.Message}");
        string svg;
        try { svg = draw(genotype); }
        // The drawing is another component's work: its failure is noted on the page, the report goes on.
        catch (Exception e) when (e is not OutOfMemoryException)
        {
            return new CellPicture(candidate.Id, null, $"the cell could not be drawn: {e.Message}");
        }
        if (!svg.Contains("<svg", StringComparison.Ordinal))
            return new CellPicture(candidate.Id, null, "the cell drawer returned no SVG element");
        return new CellPicture(candidate.Id, SvgFragment.Inline(svg, $"cell{index}-"), null);
    }
}
