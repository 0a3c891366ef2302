using System.Globalization;
using CellCompiler.Figures;
using CellCompiler.Input;
using CellCompiler.Inspection;
using CellCompiler.OnnxFormat;
using CellCompiler.Screening;

namespace CellCompiler.Runtime;

/// <summary>
/// What running a model at a batch size needs, known before any session is made, so that a batch
/// that cannot run here is refused at once instead of after the model is loaded or after minutes of
/// running: each input's values, with every symbolic or unknown dimension set to the batch (as
/// <see cref="ModelInputs"/> sets them), and the memory (<see cref="Estimate"/>).
/// </summary>
public sealed class RunNeeds
{
    /// <summary>ONNX Runtime's own bytes per node of a loaded session (kernels, shapes, names), measured with headroom.</summary>
    public const long RuntimeBytesPerNode = 40_000;

    /// <summary>Counts stop growing here (past every limit), so that no product of hostile dims overflows.</summary>
    private static readonly Int128 Beyond = (Int128)long.MaxValue + 1;

    private readonly IReadOnlyList<(string Name, IReadOnlyList<Dim> Shape)> _inputs;
    private readonly long _weightBytes;
    private readonly long _nodes;
    private readonly Func<int, Int128> _activationBytes;

    /// <summary>What the activations counted are, for the message: the whole network's, or only the input's.</summary>
    private readonly string _activationsAre;

    private RunNeeds(IReadOnlyList<(string, IReadOnlyList<Dim>)> inputs, long weightBytes, long nodes, Func<int, Int128> activationBytes,
        string activationsAre = "activations") =>
        (_inputs, _weightBytes, _nodes, _activationBytes, _activationsAre) = (inputs, weightBytes, nodes, activationBytes, activationsAre);

    /// <summary>
    /// Memory to run, estimated: the weights three times (ours, the runtime's copy and its prepared
    /// weights; a 2.14 GB model peaked at 6.3 GB), the activations twice over, and the runtime's own
    /// structures per node.
    /// </summary>
    public static Int128 Estimate(long weightBytes, Int128 activationBytes, long nodes) =>
        (Int128)weightBytes * 3 + activationBytes * 2 + (Int128)nodes * RuntimeBytesPerNode;

    /// <summary>A skeleton's input alone, before its network is compiled (no weights yet).</summary>
    public static RunNeeds OfInput(InputSpec input)
    {
        var inputs = ImagesInput(input);
        return new RunNeeds(inputs, 0, 0, batch => Elements(inputs[0].Item2, batch) * sizeof(float), "the input alone");
    }

    /// <summary>A compiled network: its weights, and its peak activations per sample times the batch.</summary>
    public static RunNeeds OfNetwork(InputSpec input, NetworkFigures figures) =>
        new(ImagesInput(input), figures.WeightBytes, figures.OpCounts.Values.Sum(n => (long)n),
            batch => (Int128)figures.PeakActivationBytes * batch);

    /// <summary>
    /// Any ONNX model: the inputs it states; its weights, counted as the model's bytes (the
    /// initializers are nearly all of them); and the peak of live activations at the batch, over
    /// the tensors whose shapes the model states or <see cref="ShapePropagation"/> completes
    /// (float32, as bench feeds them). A tensor whose shape stays unknown counts nothing: the
    /// estimate may fall short, but a guessed size never refuses a model that would run.
    /// </summary>
    public static RunNeeds OfModel(ModelProto model, long modelBytes)
    {
        var graph = model.Graph;
        var initializers = graph.Initializer.Select(t => t.Name).ToHashSet(StringComparer.Ordinal);
        var inputs = graph.Input.Where(i => !initializers.Contains(i.Name))
            .Select(i => (i.Name, (IReadOnlyList<Dim>)(ShapePropagation.DeclaredShape(i) ?? [])))
            .ToList();
        var fed = inputs.GroupBy(i => i.Name).ToDictionary(g => g.Key, g => g.First().Item2, StringComparer.Ordinal);
        var shapes = ShapePropagation.Run(graph).Table;
        var steps = graph.Node.Select(n => new RunStep(n.Input, n.Output)).ToList();
        return new RunNeeds(inputs, modelBytes, graph.Node.Count, batch => LiveBytes.Peak(steps, fed.Keys, tensor =>
            fed.TryGetValue(tensor, out var input) ? Elements(input, batch) * sizeof(float)
            : shapes[tensor] is { } shape && ShapeTable.IsComplete(shape) ? Elements(shape, batch) * sizeof(float)
            : 0));
    }

    public Int128 MemoryBytes(int batch) => Estimate(_weightBytes, _activationBytes(batch), _nodes);

    /// <summary>
    /// Refuses, as bad input naming <paramref name="path"/> and --batch, the largest of the batch sizes
    /// (every need grows with the batch) when one of its inputs cannot be one tensor, or when its run
    /// would need more than <paramref name="availableBytes"/> (default: half the memory available).
    /// </summary>
    public void Require(string path, IReadOnlyList<int> batches, long? availableBytes = null)
    {
        var batch = batches.Max();
        foreach (var (name, shape) in _inputs)
        {
            var values = Elements(shape, batch);
            if (values > Array.MaxLength)
                throw new InputException(path, "--batch",
                    $"input '{name}' [{string.Join(", ", shape)}] at batch {batch} would hold {Count(values)} values, " +
                    $"more than the {Array.MaxLength:N0} one tensor may hold; use a smaller --batch");
        }
        var available = availableBytes ?? MemoryGuard.DefaultCapacity;
        var needed = MemoryBytes(batch);
        if (needed > available)
        {
            var weights = _weightBytes > 0 ? $"weights {Gigabytes(_weightBytes)} GB three times, " : "";
            throw new InputException(path, "--batch",
                $"batch {batch} needs about {Gigabytes(needed)} GB of memory (estimated before running: {weights}{_activationsAre} " +
                $"{Gigabytes(_activationBytes(batch))} GB twice), more than the {Gigabytes(available)} GB a measurement may use " +
                "(half of the memory available); use a smaller --batch");
        }
    }

    private static List<(string, IReadOnlyList<Dim>)> ImagesInput(InputSpec input) =>
        [(Graph.Network.DefaultInputName, [Dim.Named("N"), Dim.Of(input.Channels), Dim.Of(input.Height), Dim.Of(input.Width)])];

    /// <summary>Values of a tensor at the batch: every dimension that is not a number is the batch.</summary>
    private static Int128 Elements(IEnumerable<Dim> shape, int batch)
    {
        Int128 product = 1;
        foreach (var dim in shape)
        {
            product *= dim.Value is { } v ? Math.Max(v, 0) : batch;
            if (product >= Beyond) return Beyond;
        }
        return product;
    }

    private static string Count(Int128 values) => values >= Beyond ? "more than 2^63" : values.ToString("N0", CultureInfo.InvariantCulture);

    private static string Gigabytes(Int128 bytes) => Wording.Significant((double)bytes / 1e9);
}
