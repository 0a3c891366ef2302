namespace CellCompiler.Hashing;

/// <summary>
/// The expanded cell as a labelled DAG of layers, built once per hash: node 0 is the cell's input
/// tensor, every other node is one layer. A layer has one input; a join (a concat or sum merge, an
/// elementwise Mul inside a primitive) has two or more inputs taken as a multiset, so their order
/// never matters. Nodes are numbered in the order they are added, which is a topological order
/// because a node's inputs must exist before it.
/// </summary>
public sealed class LayerGraph
{
    /// <summary>Labels starting with this character are reserved for the canonical form's own atoms.</summary>
    public const char ReservedPrefix = '\u0001';

    private readonly List<string> _labels = ["input"];
    private readonly List<int[]> _inputs = [[]];
    private readonly List<bool> _isJoin = [false];

    /// <summary>The cell's input tensor.</summary>
    public const int Input = 0;

    public int Count => _labels.Count;

    /// <summary>The node whose tensor the cell returns (node 0 for a cell that passes its input through).</summary>
    public int Output { get; set; }

    public string Label(int node) => _labels[node];

    public IReadOnlyList<int> Inputs(int node) => _inputs[node];

    public bool IsJoin(int node) => _isJoin[node];

    /// <summary>Adds a single-input layer, e.g. a Conv or a BatchNormalization, and returns its node.</summary>
    public int AddLayer(string label, int input)
    {
        CheckLabel(label);
        CheckNode(input);
        return Add(label, [input], join: false);
    }

    /// <summary>Adds a node over an unordered multiset of two or more inputs (the same input may appear twice).</summary>
    public int AddJoin(string label, IReadOnlyList<int> inputs)
    {
        CheckLabel(label);
        if (inputs.Count < 2) throw new ArgumentException($"a join needs at least two inputs, got {inputs.Count}", nameof(inputs));
        var copy = new int[inputs.Count];
        for (var i = 0; i < copy.Length; i++)
        {
            CheckNode(inputs[i]);
            copy[i] = inputs[i];
        }
        return Add(label, copy, join: true);
    }

    private int Add(string label, int[] inputs, bool join)
    {
        _labels.Add(label);
        _inputs.Add(inputs);
        _isJoin.Add(join);
        return _labels.Count - 1;
    }

    private void CheckNode(int node)
    {
        if ((uint)node >= (uint)_labels.Count) throw new ArgumentOutOfRangeException(nameof(node), $"node {node} does not exist yet");
    }

    private static void CheckLabel(string label)
    {
        if (string.IsNullOrEmpty(label) || label[0] == ReservedPrefix)
            throw new ArgumentException($"a layer label must be non-empty and must not start with U+0001: '{label}'", nameof(label));
    }
}
