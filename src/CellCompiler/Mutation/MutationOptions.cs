using CellCompiler.Input;

namespace CellCompiler.Mutation;

/// <param name="Count">Mutants per parent.</param>
/// <param name="Distinct">Retry until the mutant's network_hash (under <paramref name="Merge"/>) differs from the parent's and its cell is alive.</param>
/// <param name="LevelZeroOps">The level-0 alphabet; null: identity, none, the built-ins and the parent's declared primitives.</param>
/// <param name="MaxTries">Draws per mutant before giving up (each retry is a fresh draw).</param>
public sealed record MutationOptions(int Count = 1, long Seed = 0, bool Distinct = false, IReadOnlyList<string>? LevelZeroOps = null,
    MergeMode Merge = MergeMode.Concat, int MaxTries = MutationOptions.DefaultMaxTries)
{
    public const int DefaultMaxTries = 1_000;
    public const int MaxCount = 1_000_000;
}
