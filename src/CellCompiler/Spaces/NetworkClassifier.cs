using CellCompiler.Hashing;
using CellCompiler.Input;
using CellCompiler.Lowering;

namespace CellCompiler.Spaces;

/// <summary>What one genotype of a space is: a dead cell, or a live network known by its <see cref="NetworkKey"/>.</summary>
/// <param name="Exact">False when the hash's search budget cut its canonical labelling short (see <see cref="SearchBudget"/>).</param>
public readonly record struct NetworkClass(bool Dead, UInt128 Key, bool Exact);

/// <summary>
/// Sorts genotypes into networks by <c>network_hash</c> under one merge mode (contract section 4):
/// the same liveness analysis and hasher as <c>compile</c> and <c>check</c>, one expander shared by every call.
/// </summary>
public sealed class NetworkClassifier(SearchSpace space, MergeMode merge)
{
    private readonly LayerExpander _expander = new(space.Primitives);

    public MergeMode Merge => merge;

    public NetworkClass Classify(Genotype genotype)
    {
        var liveness = Liveness.Analyse(genotype);
        if (!liveness.Cell(genotype).OutputIsLive) return new NetworkClass(true, default, true);
        var hash = GenotypeHasher.NetworkHash(genotype, liveness, merge, _expander, out var exact);
        return new NetworkClass(false, NetworkKey.Of(hash), exact);
    }
}
