using CellCompiler.Figures;
using CellCompiler.Graph;
using CellCompiler.Hashing;
using CellCompiler.Input;
using CellCompiler.Lowering;
using CellCompiler.Onnx;
using CellCompiler.Shapes;

namespace CellCompiler.Compilation;

/// <summary>
/// The whole pipeline, top-down: lower -> infer shapes -> count figures -> emit ONNX.
/// Input is an already validated genotype and resolved skeleton (see <see cref="GenotypeReader"/>).
/// </summary>
public static class Compiler
{
    /// <exception cref="DeadCellException">the cell's output does not depend on its input</exception>
    /// <exception cref="CompileException">the network cannot be formed or would be too large</exception>
    /// <param name="hashes">The genotype's hashes when the caller has them already for this skeleton's merge mode (hashing can be the costly part for symmetric motifs).</param>
    public static CompiledModel Compile(Genotype genotype, Skeleton skeleton, CompileOptions? options = null, GenotypeHashes? hashes = null) =>
        Emit(genotype, skeleton, CompileFigures(genotype, skeleton, options, hashes));

    /// <summary>
    /// The second half of <see cref="Compile"/>: draws the weights and writes the ONNX model of a network
    /// whose figures are known, so that a caller can first decide whether the weights' bytes fit
    /// (<see cref="Figures.NetworkFigures.WeightBytes"/>, about the model's size).
    /// </summary>
    /// <param name="compiled">What <see cref="CompileFigures"/> gave for this genotype and skeleton.</param>
    public static CompiledModel Emit(Genotype genotype, Skeleton skeleton, CompiledFigures compiled)
    {
        var (options, hashes) = (compiled.Options, compiled.Hashes);
        var metadata = new List<KeyValuePair<string, string>>
        {
            new("genotype_name", genotype.Name),
            new("genotype_hash", hashes.Hash),
            new("network_hash", hashes.NetworkHash),
            new("skeleton", skeleton.ToJson()),
            new("seed", options.Seed.ToString(System.Globalization.CultureInfo.InvariantCulture)),
            // With the skeleton, the seed and the opset, enough to compile the same bytes again from the file alone.
            new("genotype", RecordedGenotype(genotype)),
            new("cellc_version", BuildInfo.Version),
            new("cellc_commit", BuildInfo.Commit),
        };
        var bytes = OnnxEmitter.Emit(compiled.Network, new EmitOptions(options.Seed, options.Opset, genotype.Name, metadata));
        return new CompiledModel(genotype.Name, hashes.Hash, hashes.NetworkHash, skeleton, options, compiled.Network, compiled.Figures, compiled.Warnings, bytes);
    }

    /// <summary>
    /// Everything but the ONNX model: lower, infer shapes, count figures. No weight is drawn and
    /// nothing is serialized, which is most of a compile's time (`check --static`).
    /// </summary>
    /// <exception cref="DeadCellException">the cell's output does not depend on its input</exception>
    /// <exception cref="CompileException">the network cannot be formed or would be too large</exception>
    public static CompiledFigures CompileFigures(Genotype genotype, Skeleton skeleton, CompileOptions? options = null, GenotypeHashes? hashes = null)
    {
        options ??= CompileOptions.Default;
        if (options.Opset is < OnnxVersions.MinOpset or > OnnxVersions.MaxOpset)
            throw new ArgumentOutOfRangeException(nameof(options), $"opset must be {OnnxVersions.MinOpset} to {OnnxVersions.MaxOpset}");

        CheckExpandedSize(genotype, skeleton);
        var liveness = Liveness.Analyse(genotype);
        if (hashes is null || hashes.Merge != skeleton.Merge)
            hashes = GenotypeHasher.Hashes(genotype, liveness, skeleton.Merge);
        var network = Lowerer.Lower(genotype, skeleton, liveness, options.Opset);
        var shaped = ShapeInference.Infer(network);
        var figures = FigureCounter.Count(shaped);
        if (figures.WeightBytes >= Limits.MaxModelBytes)
            throw new CompileException(
                $"the model's weights take {figures.WeightBytes:N0} bytes; an ONNX file holds at most 2 GiB. Use fewer or narrower cells.");
        return new CompiledFigures(genotype.Name, hashes, options, shaped, figures, network.Warnings);
    }

    /// <summary>
    /// The cost figures alone (params, MACs, memory): the same lowering, shape inference and counter as
    /// <see cref="Compile"/>, without hashing or emitting ONNX. For surveys of many genotypes (`cellc space`).
    /// </summary>
    /// <exception cref="DeadCellException">the cell's output does not depend on its input</exception>
    /// <exception cref="CompileException">the network cannot be formed or would be too large</exception>
    public static NetworkFigures Figures(Genotype genotype, Skeleton skeleton)
    {
        CheckExpandedSize(genotype, skeleton);
        return FigureCounter.Count(ShapeInference.Infer(Lowerer.Lower(genotype, skeleton)));
    }

    /// <summary>The contract's op limit covers the whole expanded network, so the skeleton's cell count multiplies the cell.</summary>
    /// <exception cref="CompileException">the expanded network is over the limit</exception>
    public static void CheckExpandedSize(Genotype genotype, Skeleton skeleton)
    {
        var totalCells = skeleton.Stages.Sum(s => (long)s.Cells);
        if (ExpansionSize.CellPrimitiveOps(genotype) * totalCells > Limits.MaxExpandedPrimitiveOps)
            throw new CompileException(
                $"the expanded network ({totalCells} cells of up to {ExpansionSize.CellPrimitiveOps(genotype):N0} primitive ops each) " +
                $"exceeds the limit of {Limits.MaxExpandedPrimitiveOps:N0} primitive ops");
    }

    /// <summary>
    /// The genotype as a model records it (metadata key `genotype`): compact genotype/1 JSON with its
    /// name and declarations. The search's id and meta are bookkeeping, not network: they stay in the
    /// records, so one genotype screened under two ids (or saved as a file without one) is one model.
    /// </summary>
    public static string RecordedGenotype(Genotype genotype) => GenotypeJson.Serialize(genotype with { Id = null, Meta = null });
}

/// <summary>A compile without its ONNX bytes: the shaped network and its figures.</summary>
public sealed record CompiledFigures(string Name, GenotypeHashes Hashes, CompileOptions Options, ShapedNetwork Network, NetworkFigures Figures, IReadOnlyList<string> Warnings)
{
    public TensorShape OutputShape => Network.OutputShape;
}
