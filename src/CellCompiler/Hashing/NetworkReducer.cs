using System.Security.Cryptography;
using System.Text;

namespace CellCompiler.Hashing;

/// <summary>
/// Canonical digest of a <see cref="LayerGraph"/>, equal for two graphs exactly when they are the
/// same labelled DAG with multiset inputs. Before labelling, the graph is shrunk without losing
/// anything, in one pass in topological order:
/// <list type="bullet">
/// <item>Chains: a node whose only input is a node with no other consumer absorbs it; the merged
/// node is labelled by the sequence of labels, so a chain hashes the same however primitives,
/// edges and motifs split it.</item>
/// <item>Regions: for a join t whose immediate dominator (from the cell input) is s, the nodes
/// between s and t form a region when only t is read from outside. Such a region (typically one
/// motif application) is replaced by one node labelled by the digest of its own canonical form,
/// with s as its input. Which regions exist depends only on the graph's structure, so isomorphic
/// graphs shrink to isomorphic graphs, and each region's digest says exactly what was inside.</item>
/// </list>
/// What remains is labelled by <see cref="CanonicalLabeller"/>.
/// </summary>
internal sealed class NetworkReducer
{
    private const string EntryAtom = "\u0001entry";
    private static readonly byte[] Domain = Encoding.UTF8.GetBytes("cellc-network/1");

    private readonly List<int>[] _inputs;
    private readonly List<int>[] _consumers;
    private readonly List<string>[] _labels;
    private readonly bool[] _removed;
    private readonly int[] _idom;
    private readonly int[] _depth;
    private readonly int[] _mark;
    private readonly int[] _local;
    private readonly SearchBudget _budget;
    private int _stamp;

    public bool Exact { get; private set; } = true;

    private NetworkReducer(LayerGraph graph, SearchBudget budget)
    {
        _budget = budget;
        var n = graph.Count;
        _inputs = new List<int>[n];
        _consumers = new List<int>[n];
        _labels = new List<string>[n];
        _removed = new bool[n];
        _idom = new int[n];
        _depth = new int[n];
        _mark = new int[n];
        _local = new int[n];

        // Only nodes the output depends on count (a sum flattened away leaves its node unread).
        var needed = new bool[n];
        needed[graph.Output] = true;
        for (var v = n - 1; v >= 0; v--)
            if (needed[v])
                foreach (var u in graph.Inputs(v)) needed[u] = true;
        for (var v = 0; v < n; v++)
        {
            _removed[v] = !needed[v];
            _consumers[v] = [];
        }
        for (var v = 0; v < n; v++)
        {
            if (_removed[v]) continue;
            _inputs[v] = [.. graph.Inputs(v)];
            _labels[v] = [(graph.IsJoin(v) ? "J:" : "L:") + graph.Label(v)];
            foreach (var u in _inputs[v]) _consumers[u].Add(v);
        }
        _labels[0] = [EntryAtom];
    }

    /// <summary>The SHA-256 digest of the graph's canonical form.</summary>
    public static byte[] Digest(LayerGraph graph, SearchBudget budget, out bool exact)
    {
        if (graph.Output == LayerGraph.Input)
        {
            exact = true;
            return SHA256.HashData([.. Domain, .. "\nidentity"u8]);
        }
        var reducer = new NetworkReducer(graph, budget);
        for (var t = 1; t < graph.Count; t++)
            if (!reducer._removed[t]) reducer.Visit(t);
        var remaining = new List<int>();
        for (var v = 0; v < graph.Count; v++)
            if (!reducer._removed[v]) remaining.Add(v);
        var digest = reducer.RegionDigest(0, remaining);
        exact = reducer.Exact;
        return digest;
    }

    private void Visit(int t)
    {
        var inputs = _inputs[t];
        var s = inputs[0];
        for (var k = 1; k < inputs.Count; k++) s = CommonDominator(s, inputs[k]);
        _idom[t] = s;
        _depth[t] = _depth[s] + 1;

        if (inputs.Count > 1) TryContract(t, s);
        TryAbsorbInput(t);
    }

    private int CommonDominator(int a, int b)
    {
        while (a != b)
        {
            while (_depth[a] > _depth[b]) a = _idom[a];
            while (_depth[b] > _depth[a]) b = _idom[b];
            if (a != b)
            {
                a = _idom[a];
                b = _idom[b];
            }
        }
        return a;
    }

    /// <summary>Replaces the nodes between s and t by one node when nothing outside reads them but t.</summary>
    private void TryContract(int t, int s)
    {
        var stamp = ++_stamp;
        var region = new List<int> { t };
        _mark[t] = stamp;
        // Every path from the cell input to t passes s, so walking inputs back from t without crossing s stays after s.
        for (var i = 0; i < region.Count; i++)
            foreach (var u in _inputs[region[i]])
                if (u != s && _mark[u] != stamp)
                {
                    _mark[u] = stamp;
                    region.Add(u);
                }
        if (region.Count < 2) return;
        foreach (var v in region)
        {
            if (v == t) continue;
            foreach (var w in _consumers[v])
                if (_mark[w] != stamp) return;
        }

        region.Sort();
        var atom = "\u0001" + Convert.ToHexStringLower(RegionDigest(s, region));
        foreach (var v in region)
        {
            if (v == t) continue;
            _removed[v] = true;
            _inputs[v] = null!;
            _labels[v] = null!;
        }
        _consumers[s].RemoveAll(w => _mark[w] == stamp);
        _consumers[s].Add(t);
        _inputs[t] = [s];
        _labels[t] = [atom];
    }

    /// <summary>Chain step: t's only input u has no other consumer, so t absorbs u.</summary>
    private void TryAbsorbInput(int t)
    {
        if (_inputs[t].Count != 1) return;
        var u = _inputs[t][0];
        if (u == LayerGraph.Input || _consumers[u].Count != 1) return;
        _labels[u].AddRange(_labels[t]);
        _labels[t] = _labels[u];
        _inputs[t] = _inputs[u];
        foreach (var p in _inputs[u])
        {
            var consumers = _consumers[p];
            for (var i = 0; i < consumers.Count; i++)
                if (consumers[i] == u) consumers[i] = t;
        }
        _idom[t] = _idom[u];
        _depth[t] = _depth[u];
        _removed[u] = true;
        _inputs[u] = null!;
        _labels[u] = null!;
    }

    /// <summary>
    /// Digest of the subgraph made of <paramref name="entry"/> (as the anonymous input) and the
    /// ascending <paramref name="nodes"/>, which read only each other and the entry.
    /// </summary>
    private byte[] RegionDigest(int entry, List<int> nodes)
    {
        var count = nodes.Count + (nodes[0] == entry ? 0 : 1);
        var members = new int[count];
        members[0] = entry;
        var offset = nodes[0] == entry ? 1 : 0;
        for (var i = offset; i < nodes.Count; i++) members[i + 1 - offset] = nodes[i];
        for (var i = 0; i < count; i++) _local[members[i]] = i;

        var inputs = new int[count][];
        var consumers = new List<int>[count];
        for (var i = 0; i < count; i++) consumers[i] = [];
        inputs[0] = [];
        for (var i = 1; i < count; i++)
        {
            var source = _inputs[members[i]];
            var mapped = new int[source.Count];
            for (var k = 0; k < mapped.Length; k++)
            {
                mapped[k] = _local[source[k]];
                consumers[mapped[k]].Add(i);
            }
            inputs[i] = mapped;
        }
        var labels = new List<string>[count];
        labels[0] = [EntryAtom];
        for (var i = 1; i < count; i++) labels[i] = _labels[members[i]];

        var colours = LabelRanks(labels);
        var order = CanonicalLabeller.Order(inputs, consumers.Select(c => c.ToArray()).ToArray(), colours, _budget, out var exact);
        if (!exact) Exact = false;
        return Serialise(order, labels, inputs);
    }

    /// <summary>Initial colours: the rank of each node's exact label sequence, so no two labels ever share a colour.</summary>
    private static UInt128[] LabelRanks(List<string>[] labels)
    {
        var sorted = Enumerable.Range(0, labels.Length).ToArray();
        Array.Sort(sorted, (a, b) => CompareLabels(labels[a], labels[b]));
        var colours = new UInt128[labels.Length];
        var rank = 0;
        for (var i = 0; i < sorted.Length; i++)
        {
            if (i > 0 && CompareLabels(labels[sorted[i - 1]], labels[sorted[i]]) != 0) rank++;
            colours[sorted[i]] = (UInt128)rank;
        }
        return colours;
    }

    private static int CompareLabels(List<string> a, List<string> b)
    {
        var c = a.Count.CompareTo(b.Count);
        for (var i = 0; c == 0 && i < a.Count; i++) c = string.CompareOrdinal(a[i], b[i]);
        return c;
    }

    /// <summary>SHA-256 of the relabelled graph: node count, each node's labels, each node's inputs as canonical positions.</summary>
    private static byte[] Serialise(int[] order, List<string>[] labels, int[][] inputs)
    {
        var position = new int[order.Length];
        for (var i = 0; i < order.Length; i++) position[order[i]] = i;
        using var hash = IncrementalHash.CreateHash(HashAlgorithmName.SHA256);
        var buffer = new List<byte>(256);
        buffer.AddRange(Domain);
        AddInt(buffer, order.Length);
        foreach (var v in order)
        {
            AddInt(buffer, labels[v].Count);
            foreach (var atom in labels[v])
            {
                var bytes = Encoding.UTF8.GetBytes(atom);
                AddInt(buffer, bytes.Length);
                buffer.AddRange(bytes);
            }
            var mapped = inputs[v].Select(u => position[u]).Order().ToArray();
            AddInt(buffer, mapped.Length);
            foreach (var p in mapped) AddInt(buffer, p);
            if (buffer.Count > 1 << 16)
            {
                hash.AppendData([.. buffer]);
                buffer.Clear();
            }
        }
        hash.AppendData([.. buffer]);
        return hash.GetHashAndReset();
    }

    private static void AddInt(List<byte> buffer, int value)
    {
        buffer.Add((byte)value);
        buffer.Add((byte)(value >> 8));
        buffer.Add((byte)(value >> 16));
        buffer.Add((byte)(value >> 24));
    }
}
