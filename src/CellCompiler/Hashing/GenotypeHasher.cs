using System.Security.Cryptography;
using CellCompiler.Input;
using CellCompiler.Lowering;

namespace CellCompiler.Hashing;

/// <summary>Both digests of one genotype: <see cref="Hash"/> (concat merges) and the network hash under one merge mode.</summary>
/// <param name="Exact">False only when the search budget cut a canonical labelling short (see <see cref="SearchBudget"/>).</param>
public sealed record GenotypeHashes(string Hash, string NetworkHash, MergeMode Merge, bool Exact);

/// <summary>
/// The hashes of contract section 4. The cell is expanded into its network of layers (motifs
/// inlined, dead code removed, identity edges and single-input nodes contracted, merges as
/// multiset joins, nested sums flattened under sum merges) and the SHA-256 of that network's
/// canonical form is the hash. So two genotypes share a hash exactly when they lower to the same
/// network, whatever their motif names, edge order, `none` edges, unused motifs, dead code, node
/// numbering or motif hierarchy. `hash` uses concat merges whatever the skeleton; the network hash
/// uses the skeleton's merge mode and equals `hash` under concat.
/// </summary>
public static class GenotypeHasher
{
    private static readonly string DeadCell = Convert.ToHexStringLower(SHA256.HashData("cellc-network/1\nnone"u8));

    public static string Hash(Genotype genotype) => Hash(genotype, Liveness.Analyse(genotype));

    public static string Hash(Genotype genotype, Liveness liveness) =>
        NetworkHash(genotype, liveness, MergeMode.Concat);

    public static string NetworkHash(Genotype genotype, Liveness liveness, MergeMode merge) =>
        NetworkHash(genotype, liveness, merge, new LayerExpander(genotype.Primitives), out _);

    /// <summary>Both hashes at once; under concat merges the network is expanded and labelled only once.</summary>
    public static GenotypeHashes Hashes(Genotype genotype, Liveness liveness, MergeMode merge) =>
        Hashes(genotype, liveness, merge, new LayerExpander(genotype.Primitives));

    /// <param name="expander">How level-0 primitives become layers (see <see cref="IPrimitiveExpander"/>).</param>
    public static GenotypeHashes Hashes(Genotype genotype, Liveness liveness, MergeMode merge, IPrimitiveExpander expander)
    {
        var hash = NetworkHash(genotype, liveness, MergeMode.Concat, expander, out var exact);
        if (merge == MergeMode.Concat) return new GenotypeHashes(hash, hash, merge, exact);
        var network = NetworkHash(genotype, liveness, merge, expander, out var networkExact);
        return new GenotypeHashes(hash, network, merge, exact && networkExact);
    }

    /// <summary>The network hash under <paramref name="merge"/>; a dead cell has one fixed digest of its own.</summary>
    public static string NetworkHash(Genotype genotype, Liveness liveness, MergeMode merge, IPrimitiveExpander expander, out bool exact)
    {
        exact = true;
        if (!liveness.Cell(genotype).OutputIsLive) return DeadCell;
        var graph = CellExpansion.Expand(genotype, liveness, merge, expander);
        return Convert.ToHexStringLower(NetworkReducer.Digest(graph, new SearchBudget(), out exact));
    }
}
