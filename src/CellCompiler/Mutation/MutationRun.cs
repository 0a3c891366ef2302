using CellCompiler.Screening;

namespace CellCompiler.Mutation;

/// <summary>What a mutate run did.</summary>
/// <param name="Retries">Draws discarded over the whole run (same network, dead cell, over a limit).</param>
/// <param name="GaveUp">Mutants not found within the draw bound.</param>
/// <param name="Failures">The first <see cref="MutationRun.FailuresKept"/> of them, each with its parent and reason.</param>
public sealed record MutationSummary(long Parents, long Mutants, long Retries, long GaveUp, IReadOnlyList<MutantResult> Failures);

/// <summary>
/// `cellc mutate`: <see cref="MutationOptions.Count"/> mutants of every parent, in input order, each
/// written as one JSON line as soon as it is found (memory holds one parent at a time). A parent that
/// is not a valid genotype stops the run with its error (file, line, JSON path): mutating it is not possible.
/// </summary>
public static class MutationRun
{
    /// <summary>At most this many failures are kept for the summary; all are counted.</summary>
    public const int FailuresKept = 20;

    public static MutationSummary Write(IEnumerable<Candidate> parents, MutationOptions options, Stream output, Action<MutantResult>? failed = null)
    {
        var mutator = new Mutator(options);
        long parentCount = 0, mutants = 0, retries = 0, gaveUp = 0;
        var failures = new List<MutantResult>();
        foreach (var parent in parents)
        {
            if (parent.Genotype is not { } genotype) throw parent.Error!;
            parentCount++;
            var origin = parent.Place.File is null ? parent.Id : parent.Place.ToString();
            for (var n = 1; n <= options.Count; n++)
            {
                var result = mutator.Mutate(genotype, parent.Id, n, origin);
                retries += result.Retries.Total;
                if (!result.Succeeded)
                {
                    gaveUp++;
                    if (failures.Count < FailuresKept) failures.Add(result);
                    failed?.Invoke(result);
                    continue;
                }
                var bytes = System.Text.Encoding.UTF8.GetBytes(result.Json!);
                output.Write(bytes);
                output.WriteByte((byte)'\n');
                mutants++;
            }
            output.Flush();
        }
        return new MutationSummary(parentCount, mutants, retries, gaveUp, failures);
    }
}
