namespace CellCompiler.Hashing;

/// <summary>
/// Refinement work allowed for canonical labelling across one whole network (one unit per node or
/// edge visited by a refinement pass). Only a last resort: no network of the benchmarks comes near
/// it. Past it, every remaining tie is broken by the first candidate in node order instead of being
/// searched: the hash is still deterministic and still never shared by two different networks,
/// but two spellings of one highly symmetric network could then hash apart.
/// </summary>
public sealed class SearchBudget(long units = SearchBudget.DefaultUnits)
{
    public const long DefaultUnits = 10_000_000;

    private readonly long _units = units;
    private long _remaining = units;

    public bool Exhausted => _remaining <= 0;

    /// <summary>Work done so far, for measurements.</summary>
    public long Spent => _units - _remaining;

    public void Spend(long work) => _remaining -= work;
}
