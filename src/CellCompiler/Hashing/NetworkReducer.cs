using System.Buffers;
using System.Buffers.Binary;
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
    private static readonly byte[] Domain = "cellc-network/1"u8.ToArray();
    private const int EntryAtom = 0;

    private readonly LayerGraph _graph;
    private readonly SearchBudget _budget;
    private readonly int[][] _inputs;
    // Consumers as built; entries may name nodes since absorbed, which Resolve maps to their successor.
    private readonly int[] _consumerStart;
    private readonly int[] _consumerList;
    private readonly int[] _consumerCount;
    private readonly int[] _forward;
    private readonly bool[] _removed;
    private readonly int[] _idom;
    private readonly int[] _depth;
    private readonly int[] _mark;
    private readonly int[] _local;
    // Each node's label is a chain of atoms: _first/_last per node, _next per chain link.
    private readonly int[] _first;
    private readonly int[] _last;
    private readonly List<int> _linkAtom = [];
    private readonly List<int> _linkNext = [];
    private readonly List<string> _atoms = ["\u0001entry"];
    private readonly List<byte[]> _atomBytes = [];
    private readonly Dictionary<string, int> _atomIds = new(StringComparer.Ordinal);
    private readonly ArrayBufferWriter<byte> _buffer = new(1024);
    private readonly Dictionary<string, byte[]> _regionCache = new(StringComparer.Ordinal);
    private int _stamp;

    public bool Exact { get; private set; } = true;

    private NetworkReducer(LayerGraph graph, SearchBudget budget)
    {
        _graph = graph;
        _budget = budget;
        var n = graph.Count;
        _inputs = new int[n][];
        _consumerCount = new int[n];
        _forward = new int[n];
        _removed = new bool[n];
        _idom = new int[n];
        _depth = new int[n];
        _mark = new int[n];
        _local = new int[n];
        _first = new int[n];
        _last = new int[n];
        _atomIds[_atoms[0]] = 0;

        // Only nodes the output depends on count (a sum flattened away leaves its node unread).
        var needed = new bool[n];
        needed[graph.Output] = true;
        for (var v = n - 1; v >= 0; v--)
            if (needed[v])
                foreach (var u in graph.Inputs(v)) needed[u] = true;

        for (var v = 0; v < n; v++)
        {
            _forward[v] = v;
            _removed[v] = !needed[v];
            if (_removed[v]) continue;
            _inputs[v] = (int[])graph.Inputs(v);
            foreach (var u in _inputs[v]) _consumerCount[u]++;
            var atom = v == 0 ? EntryAtom : Atom((graph.IsJoin(v) ? "J:" : "L:") + graph.Label(v));
            _first[v] = _last[v] = NewLink(atom);
        }
        _consumerStart = new int[n + 1];
        for (var v = 0; v < n; v++) _consumerStart[v + 1] = _consumerStart[v] + _consumerCount[v];
        _consumerList = new int[_consumerStart[n]];
        var fill = (int[])_consumerStart.Clone();
        for (var v = 0; v < n; v++)
            if (!_removed[v])
                foreach (var u in _inputs[v]) _consumerList[fill[u]++] = v;
    }

    /// <summary>The SHA-256 digest of the graph's canonical form.</summary>
    public static byte[] Digest(LayerGraph graph, SearchBudget budget, out bool exact)
    {
        exact = true;
        if (graph.Output == LayerGraph.Input)
            return SHA256.HashData([.. Domain, .. "\nidentity"u8]);
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

    private int Atom(string text)
    {
        if (!_atomIds.TryGetValue(text, out var id))
        {
            id = _atoms.Count;
            _atoms.Add(text);
            _atomIds[text] = id;
        }
        return id;
    }

    private int NewLink(int atom)
    {
        _linkAtom.Add(atom);
        _linkNext.Add(-1);
        return _linkAtom.Count - 1;
    }

    private void Visit(int t)
    {
        var inputs = _inputs[t];
        var s = inputs[0];
        for (var k = 1; k < inputs.Length; k++) s = CommonDominator(s, inputs[k]);
        _idom[t] = s;
        _depth[t] = _depth[s] + 1;

        if (inputs.Length > 1) TryContract(t, s);
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

    /// <summary>The live node that now stands for <paramref name="v"/> (itself, or the node that absorbed it).</summary>
    private int Resolve(int v)
    {
        var root = v;
        while (_forward[root] != root) root = _forward[root];
        while (_forward[v] != root)
        {
            var next = _forward[v];
            _forward[v] = root;
            v = next;
        }
        return root;
    }

    /// <summary>Replaces the nodes between s and t by one node when nothing outside reads them but t.</summary>
    private void TryContract(int t, int s)
    {
        var stamp = ++_stamp;
        var region = new List<int> { t };
        _mark[t] = stamp;
        var edgesFromS = 0;
        // Every path from the cell input to t passes s, so walking inputs back from t without crossing s stays after s.
        for (var i = 0; i < region.Count; i++)
            foreach (var u in _inputs[region[i]])
            {
                if (u == s) edgesFromS++;
                else if (_mark[u] != stamp)
                {
                    // A consumer after t lies outside: no region (checked early, it is the common case).
                    for (var k = _consumerStart[u]; k < _consumerStart[u + 1]; k++)
                        if (Resolve(_consumerList[k]) > t) return;
                    _mark[u] = stamp;
                    region.Add(u);
                }
            }
        if (region.Count < 2) return;
        foreach (var v in region)
        {
            if (v == t) continue;
            for (var k = _consumerStart[v]; k < _consumerStart[v + 1]; k++)
                if (_mark[Resolve(_consumerList[k])] != stamp) return;
        }

        region.Sort();
        var atom = Atom("\u0001" + Convert.ToHexStringLower(RegionDigest(s, region)));
        foreach (var v in region)
        {
            if (v == t) continue;
            _removed[v] = true;
            _forward[v] = t;
            _inputs[v] = null!;
        }
        _consumerCount[s] -= edgesFromS - 1;
        _inputs[t] = [s];
        _first[t] = _last[t] = NewLink(atom);
    }

    /// <summary>Chain step: t's only input u has no other consumer, so t absorbs u.</summary>
    private void TryAbsorbInput(int t)
    {
        if (_inputs[t].Length != 1) return;
        var u = _inputs[t][0];
        if (u == LayerGraph.Input || _consumerCount[u] != 1) return;
        _linkNext[_last[u]] = _first[t];
        _first[t] = _first[u];
        _inputs[t] = _inputs[u];
        _idom[t] = _idom[u];
        _depth[t] = _depth[u];
        _removed[u] = true;
        _forward[u] = t;
        _inputs[u] = null!;
    }

    /// <summary>
    /// Digest of the subgraph made of <paramref name="entry"/> (as the anonymous input) and the
    /// ascending <paramref name="nodes"/>, which read only each other and the entry; the last node
    /// is the region's output. A node with one input and one consumer (an op between two merges,
    /// typically) becomes a labelled edge, which keeps the graphs that the labeller sees small.
    /// </summary>
    private byte[] RegionDigest(int entry, List<int> nodes)
    {
        var offset = nodes[0] == entry ? 1 : 0;
        var count = nodes.Count + 1 - offset;
        var members = new int[count];
        members[0] = entry;
        for (var i = offset; i < nodes.Count; i++) members[i + 1 - offset] = nodes[i];
        for (var i = 0; i < count; i++) _local[members[i]] = i;

        var consumerCounts = new int[count];
        for (var i = 1; i < count; i++)
            foreach (var u in _inputs[members[i]]) consumerCounts[_local[u]]++;
        var kept = new int[count];
        var keptCount = 0;
        for (var i = 0; i < count; i++)
        {
            var isEdge = i != 0 && i != count - 1 && _inputs[members[i]].Length == 1 && consumerCounts[i] == 1;
            kept[i] = isEdge ? -1 : keptCount++;
        }

        var labels = new int[keptCount][];
        var inputs = new int[keptCount][];
        var edgeLabels = new int[keptCount][][];
        for (var i = 0; i < count; i++)
        {
            if (kept[i] < 0) continue;
            var k = kept[i];
            labels[k] = i == 0 ? [EntryAtom] : Chain(members[i]);
            var source = i == 0 ? [] : _inputs[members[i]];
            inputs[k] = new int[source.Length];
            edgeLabels[k] = new int[source.Length][];
            for (var e = 0; e < source.Length; e++)
            {
                var u = _local[source[e]];
                if (kept[u] >= 0)
                {
                    inputs[k][e] = kept[u];
                    edgeLabels[k][e] = [];
                }
                else
                {
                    inputs[k][e] = kept[_local[_inputs[members[u]][0]]];
                    edgeLabels[k][e] = Chain(members[u]);
                }
            }
        }

        var key = CacheKey(labels, inputs, edgeLabels);
        if (_regionCache.TryGetValue(key, out var cached)) return cached;

        var colours = Ranks(labels, offset: 0);
        var edgeRanks = EdgeRanks(edgeLabels);
        var order = CanonicalLabeller.Order(inputs, edgeRanks, colours, _budget, out var exact);
        if (!exact) Exact = false;
        var digest = Serialise(order, labels, inputs, edgeLabels, edgeRanks);
        _regionCache[key] = digest;
        return digest;
    }

    /// <summary>The region exactly as built (atom ids and local numbers): instances of one motif are built alike and are labelled once.</summary>
    private string CacheKey(int[][] labels, int[][] inputs, int[][][] edgeLabels)
    {
        _buffer.Clear();
        for (var v = 0; v < labels.Length; v++)
        {
            WriteInts(labels[v]);
            WriteInt(inputs[v].Length);
            for (var e = 0; e < inputs[v].Length; e++)
            {
                WriteInt(inputs[v][e]);
                WriteInts(edgeLabels[v][e]);
            }
        }
        return Convert.ToBase64String(_buffer.WrittenSpan);
    }

    private void WriteInts(int[] values)
    {
        WriteInt(values.Length);
        foreach (var value in values) WriteInt(value);
    }

    /// <summary>Edge label ranks, 0 for an edge without a label, so equal labels and only they share a rank.</summary>
    private int[][] EdgeRanks(int[][][] edgeLabels)
    {
        var all = new List<int[]>();
        foreach (var perNode in edgeLabels)
            foreach (var label in perNode)
                if (label.Length > 0) all.Add(label);
        var ranks = Ranks([.. all], offset: 1);
        var result = new int[edgeLabels.Length][];
        var next = 0;
        for (var v = 0; v < edgeLabels.Length; v++)
        {
            result[v] = new int[edgeLabels[v].Length];
            for (var e = 0; e < result[v].Length; e++)
                result[v][e] = edgeLabels[v][e].Length == 0 ? 0 : (int)ranks[next++];
        }
        return result;
    }

    private int[] Chain(int v)
    {
        var atoms = new List<int>();
        for (var link = _first[v]; link >= 0; link = _linkNext[link])
        {
            atoms.Add(_linkAtom[link]);
            if (link == _last[v]) break;
        }
        return [.. atoms];
    }

    /// <summary>The rank (from <paramref name="offset"/>) of each exact label sequence: equal labels, and only they, share a rank.</summary>
    private UInt128[] Ranks(int[][] labels, int offset)
    {
        // Distinct sequences first (regions repeat few labels many times), then their order by content.
        var distinct = new Dictionary<int[], int>(SequenceComparer.Instance);
        var index = new int[labels.Length];
        for (var i = 0; i < labels.Length; i++)
        {
            if (!distinct.TryGetValue(labels[i], out var d))
            {
                d = distinct.Count;
                distinct[labels[i]] = d;
            }
            index[i] = d;
        }
        var sequences = new int[distinct.Count][];
        foreach (var (sequence, d) in distinct) sequences[d] = sequence;
        var byContent = Enumerable.Range(0, sequences.Length).ToArray();
        Array.Sort(byContent, (a, b) => CompareLabels(sequences[a], sequences[b]));
        var rankOf = new int[sequences.Length];
        for (var r = 0; r < byContent.Length; r++) rankOf[byContent[r]] = offset + r;
        var colours = new UInt128[labels.Length];
        for (var i = 0; i < labels.Length; i++) colours[i] = (UInt128)rankOf[index[i]];
        return colours;
    }

    private sealed class SequenceComparer : IEqualityComparer<int[]>
    {
        public static SequenceComparer Instance { get; } = new();

        public bool Equals(int[]? x, int[]? y) => x.AsSpan().SequenceEqual(y);

        public int GetHashCode(int[] values)
        {
            var hash = new HashCode();
            hash.AddBytes(System.Runtime.InteropServices.MemoryMarshal.AsBytes(values.AsSpan()));
            return hash.ToHashCode();
        }
    }

    private int CompareLabels(int[] a, int[] b)
    {
        var c = a.Length.CompareTo(b.Length);
        for (var i = 0; c == 0 && i < a.Length; i++)
            if (a[i] != b[i]) c = string.CompareOrdinal(_atoms[a[i]], _atoms[b[i]]);
        return c;
    }

    /// <summary>SHA-256 of the relabelled graph: node count, each node's labels, each node's inputs as (canonical position, edge labels).</summary>
    private byte[] Serialise(int[] order, int[][] labels, int[][] inputs, int[][][] edgeLabels, int[][] edgeRanks)
    {
        var position = new int[order.Length];
        for (var i = 0; i < order.Length; i++) position[order[i]] = i;
        _buffer.Clear();
        _buffer.Write(Domain);
        WriteInt(order.Length);
        var edges = new List<(int Position, int Rank, int[] Label)>();
        foreach (var v in order)
        {
            WriteAtoms(labels[v]);
            edges.Clear();
            for (var e = 0; e < inputs[v].Length; e++) edges.Add((position[inputs[v][e]], edgeRanks[v][e], edgeLabels[v][e]));
            edges.Sort((a, b) => a.Position != b.Position ? a.Position.CompareTo(b.Position) : a.Rank.CompareTo(b.Rank));
            WriteInt(edges.Count);
            foreach (var edge in edges)
            {
                WriteInt(edge.Position);
                WriteAtoms(edge.Label);
            }
        }
        return SHA256.HashData(_buffer.WrittenSpan);
    }

    private void WriteAtoms(int[] atoms)
    {
        WriteInt(atoms.Length);
        foreach (var atom in atoms)
        {
            var bytes = AtomBytes(atom);
            WriteInt(bytes.Length);
            _buffer.Write(bytes);
        }
    }

    private byte[] AtomBytes(int atom)
    {
        while (_atomBytes.Count <= atom) _atomBytes.Add(Encoding.UTF8.GetBytes(_atoms[_atomBytes.Count]));
        return _atomBytes[atom];
    }

    private void WriteInt(int value)
    {
        BinaryPrimitives.WriteInt32LittleEndian(_buffer.GetSpan(4), value);
        _buffer.Advance(4);
    }
}
