namespace CellCompiler.Hashing;

/// <summary>
/// Work allowed for canonical labelling across one whole genotype, so that a genotype full of
/// highly symmetric motifs hashes in bounded time instead of exploring every tie.
/// </summary>
public sealed class SearchBudget(int leaves = SearchBudget.DefaultLeaves)
{
    public const int DefaultLeaves = 4096;

    private int _remaining = leaves;

    public bool Exhausted => _remaining <= 0;

    public void Spend() => _remaining--;
}
