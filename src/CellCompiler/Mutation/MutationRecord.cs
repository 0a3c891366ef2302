namespace CellCompiler.Mutation;

/// <summary>
/// One point mutation: at <paramref name="Level"/>, in motif <paramref name="Motif"/>, the pair
/// (<paramref name="From"/>, <paramref name="To"/>) changed from <paramref name="OldOp"/> to
/// <paramref name="NewOp"/> (`none` for a pair that is not listed). <paramref name="Retries"/>: draws
/// discarded before this one (same network, dead cell, or a genotype limit broken).
/// </summary>
public sealed record MutationRecord(int Level, string Motif, int From, int To, string OldOp, string NewOp, int Retries);

/// <summary>Why draws were discarded, counted.</summary>
public sealed record RetryCounts(int SameNetwork, int DeadCell, int OverLimit)
{
    public int Total => SameNetwork + DeadCell + OverLimit;
}

/// <summary>One mutant: its genotype as one compact JSON line (without the newline) and what changed; or why none was found.</summary>
public sealed record MutantResult(string ParentId, string Id, string? Json, Input.Genotype? Genotype, MutationRecord? Mutation, RetryCounts Retries, string? Failure)
{
    public bool Succeeded => Failure is null;
}
