using CellCompiler.Input;
using CellCompiler.Io;

namespace CellCompiler.Screening.Merging;

/// <summary>
/// The ids of a population file exactly as `cellc check` names its candidates (each non-blank line's
/// usable `id`, else `line-N`), read through the same splitter and the same id rule
/// (<see cref="PopulationReader.IdOf"/>) without validating the genotypes.
/// </summary>
public static class PopulationIds
{
    public static IEnumerable<string> ReadFile(string path)
    {
        foreach (var line in JsonLines.ReadFile(path, Limits.MaxJsonBytes))
        {
            if (line.IsBlank) continue;
            var defaultId = $"line-{line.Number}";
            yield return line.TooLong ? defaultId : PopulationReader.IdOf(line.Bytes, defaultId);
        }
    }
}
