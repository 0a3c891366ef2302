namespace CellCompiler.Hashing;

/// <summary>
/// Canonical order of the nodes of a DAG whose nodes carry colours (labels) and whose edges have
/// multiplicities, such that two such graphs get the same relabelled graph exactly when they are
/// isomorphic. Individualisation-refinement:
/// <list type="bullet">
/// <item>Refinement: a forward pass in topological order (a node's colour absorbs the multiset of
/// its inputs' colours) and a backward pass (its consumers'), repeated until the partition into
/// colours is stable, i.e. equitable.</item>
/// <item>Nodes alone in their colour are fixed. The others split into connected parts; parts are
/// canonised one by one and sorted by their certificates, so k identical parallel parts cost k
/// canonisations and one sort, not k! orderings.</item>
/// <item>A part that refinement cannot split is searched: every node of its smallest colour class
/// is individualised in turn and the smallest certificate is kept. Automorphisms (two leaves with
/// equal certificates, two equal parts) prune branches in the same orbit, so symmetric structure
/// is explored once per orbit.</item>
/// </list>
/// Every choice depends only on colours and certificates, never on node numbers, except past the
/// <see cref="SearchBudget"/>, where the search takes one branch per step (<see cref="Exact"/> is then false).
/// </summary>
internal sealed class CanonicalLabeller
{
    private readonly int[][] _in;
    private readonly int[][] _inLabel;
    private readonly int[][] _out;
    private readonly UInt128[][] _inSpread;
    private readonly UInt128[][] _outSpread;
    private readonly UInt128[] _colour;
    private readonly SearchBudget _budget;
    private readonly int[] _mark;
    private readonly int[] _position;
    private readonly UInt128[] _scratch;
    private int _stamp;

    private CanonicalLabeller(int[][] inputs, int[][] inputLabels, UInt128[] colours, SearchBudget budget)
    {
        var n = inputs.Length;
        _in = inputs;
        _inLabel = inputLabels;
        // Consumers, and a mixed image of every edge label, for the refinement passes.
        var counts = new int[n];
        foreach (var list in inputs)
            foreach (var u in list) counts[u]++;
        _out = new int[n][];
        _outSpread = new UInt128[n][];
        _inSpread = new UInt128[n][];
        for (var v = 0; v < n; v++)
        {
            _out[v] = new int[counts[v]];
            _outSpread[v] = new UInt128[counts[v]];
            _inSpread[v] = new UInt128[inputs[v].Length];
        }
        Array.Clear(counts);
        for (var v = 0; v < n; v++)
            for (var k = 0; k < inputs[v].Length; k++)
            {
                var u = inputs[v][k];
                var spread = Colours.Spread((UInt128)inputLabels[v][k] + 0x5EED);
                _inSpread[v][k] = spread;
                _out[u][counts[u]] = v;
                _outSpread[u][counts[u]++] = spread;
            }
        _colour = colours;
        _budget = budget;
        _mark = new int[inputs.Length];
        _position = new int[inputs.Length];
        _scratch = new UInt128[inputs.Length];
    }

    /// <summary>False when the search budget cut the search short; the order is then deterministic but not canonical.</summary>
    public bool Exact { get; private set; } = true;

    /// <summary>
    /// All nodes in canonical order. Nodes are numbered in a topological order (inputs before
    /// consumers); each input edge carries a label (an exact rank, 0 for none);
    /// <paramref name="colours"/> are the initial colours (exact label ranks) and are overwritten.
    /// </summary>
    public static int[] Order(int[][] inputs, int[][] inputLabels, UInt128[] colours, SearchBudget budget, out bool exact)
    {
        var labeller = new CanonicalLabeller(inputs, inputLabels, colours, budget);
        var all = new int[inputs.Length];
        for (var v = 0; v < all.Length; v++) all[v] = v;
        var order = labeller.Canon(all, quick: false, generators: null);
        exact = labeller.Exact;
        return order;
    }

    /// <summary>
    /// Canonical order of <paramref name="nodes"/> (ascending, so topological) under the current
    /// colours; nodes outside keep their colours. With <paramref name="quick"/>, follows the first
    /// branch only (a valid but not canonical leaf, used to detect automorphisms). Overwrites the colours of <paramref name="nodes"/>.
    /// </summary>
    private int[] Canon(int[] nodes, bool quick, List<int[]>? generators)
    {
        Refine(nodes);
        var byColour = (int[])nodes.Clone();
        var keys = new UInt128[nodes.Length];
        for (var i = 0; i < nodes.Length; i++) keys[i] = _colour[nodes[i]];
        Array.Sort(keys, byColour);

        // Mark nodes that share their colour; the rest are fixed by their colour alone.
        var stamp = ++_stamp;
        var singles = new List<int>();
        var shared = 0;
        for (var start = 0; start < byColour.Length;)
        {
            var end = start + 1;
            while (end < byColour.Length && keys[end] == keys[start]) end++;
            if (end - start == 1) singles.Add(byColour[start]);
            else
                for (var i = start; i < end; i++) { _mark[byColour[i]] = stamp; shared++; }
            start = end;
        }
        if (shared == 0) return byColour;

        var parts = Parts(nodes, stamp);
        var result = new List<int>(nodes.Length);
        result.AddRange(singles);
        if (parts.Count == 1)
        {
            result.AddRange(Search(parts[0], quick, generators));
            return [.. result];
        }

        var canonised = new List<(int[] Order, ulong[] Certificate)>(parts.Count);
        foreach (var part in parts)
        {
            if (part.Length == 1)
            {
                canonised.Add((part, Certificate(part)));
                continue;
            }
            var saved = Save(part);
            var order = Canon(part, quick, generators);
            Restore(part, saved);
            canonised.Add((order, Certificate(order)));
        }
        canonised.Sort((a, b) => Compare(a.Certificate, b.Certificate));
        for (var i = 0; i < canonised.Count; i++)
        {
            result.AddRange(canonised[i].Order);
            // Two equal parts can be swapped: an automorphism that ancestors use for pruning.
            if (generators is not null && i > 0 && Compare(canonised[i - 1].Certificate, canonised[i].Certificate) == 0)
                generators.Add(Swap(canonised[i - 1].Order, canonised[i].Order));
        }
        return [.. result];
    }

    /// <summary>Connected parts of the marked (colour-sharing) nodes, each in ascending node order.</summary>
    private List<int[]> Parts(int[] nodes, int stamp)
    {
        var parent = new int[nodes.Length];
        for (var i = 0; i < nodes.Length; i++)
        {
            parent[i] = i;
            _position[nodes[i]] = i;
        }
        foreach (var v in nodes)
        {
            if (_mark[v] != stamp) continue;
            foreach (var u in _in[v])
                if (_mark[u] == stamp) Union(parent, _position[v], _position[u]);
        }
        var partOfRoot = new Dictionary<int, List<int>>();
        var parts = new List<List<int>>();
        for (var i = 0; i < nodes.Length; i++)
        {
            if (_mark[nodes[i]] != stamp) continue;
            var root = Find(parent, i);
            if (!partOfRoot.TryGetValue(root, out var part))
            {
                part = [];
                partOfRoot[root] = part;
                parts.Add(part);
            }
            part.Add(nodes[i]);
        }
        return parts.ConvertAll(p => p.ToArray());
    }

    /// <summary>Individualisation over one connected part whose every colour class has two or more nodes.</summary>
    private int[] Search(int[] part, bool quick, List<int[]>? generators)
    {
        var target = TargetCell(part);
        var saved = Save(part);
        if (quick || _budget.Exhausted)
        {
            if (!quick) Exact = false;
            Individualise(target[0]);
            return Canon(part, quick, generators);
        }

        var found = new List<int[]>();
        var orbit = new Dictionary<int, int>();
        AddTwinGenerators(target, found, orbit);
        var tried = new List<int>();
        int[]? best = null, firstLeaf = null;
        ulong[]? bestCertificate = null, firstLeafCertificate = null;
        foreach (var v in target)
        {
            if (tried.Count > 0)
            {
                if (tried.Exists(u => Find(orbit, u) == Find(orbit, v))) continue;
                if (_budget.Exhausted) { Exact = false; break; }

                // The first leaf below v: if it equals the first leaf below the first branch, the map
                // between them is an automorphism, and once it joins v's orbit to that branch the whole subtree is known.
                firstLeaf ??= QuickLeaf(part, saved, tried[0], out firstLeafCertificate);
                var leaf = QuickLeaf(part, saved, v, out var leafCertificate);
                if (Compare(leafCertificate, firstLeafCertificate!) == 0)
                {
                    AddGenerator(found, orbit, Map(firstLeaf, leaf));
                    if (Find(orbit, v) == Find(orbit, tried[0])) continue;
                }
            }
            tried.Add(v);

            Restore(part, saved);
            Individualise(v);
            var below = new List<int[]>();
            var order = Canon(part, quick: false, below);
            Restore(part, saved);
            var certificate = Certificate(order);
            foreach (var generator in below) AddGenerator(found, orbit, generator);
            var comparison = best is null ? -1 : Compare(certificate, bestCertificate!);
            if (comparison < 0)
            {
                best = order;
                bestCertificate = certificate;
            }
            else if (comparison == 0)
                AddGenerator(found, orbit, Map(best!, order));
        }
        generators?.AddRange(found);
        return best!;
    }

    private int[] QuickLeaf(int[] part, UInt128[] saved, int v, out ulong[] certificate)
    {
        Restore(part, saved);
        Individualise(v);
        var leaf = Canon(part, quick: true, generators: null);
        Restore(part, saved);
        certificate = Certificate(leaf);
        return leaf;
    }

    /// <summary>
    /// Twins (same inputs and same consumers, with the same edge labels) can be swapped without
    /// changing anything: each such swap is an automorphism, so twins need one branch between them.
    /// </summary>
    private void AddTwinGenerators(int[] cell, List<int[]> found, Dictionary<int, int> orbit)
    {
        var firstOfSignature = new Dictionary<string, int>(StringComparer.Ordinal);
        foreach (var v in cell)
        {
            var signature = Signature(v);
            if (firstOfSignature.TryGetValue(signature, out var twin)) AddGenerator(found, orbit, [twin, v, v, twin]);
            else firstOfSignature[signature] = v;
        }
    }

    private string Signature(int v)
    {
        var inputs = new List<(int, int)>(_in[v].Length);
        for (var k = 0; k < _in[v].Length; k++) inputs.Add((_in[v][k], _inLabel[v][k]));
        inputs.Sort();
        var consumers = new List<(int, UInt128)>(_out[v].Length);
        for (var k = 0; k < _out[v].Length; k++) consumers.Add((_out[v][k], _outSpread[v][k]));
        consumers.Sort();
        return string.Join(",", inputs) + "|" + string.Join(",", consumers);
    }

    /// <summary>The smallest colour class of the part (ties: the smallest colour), in ascending node order.</summary>
    private int[] TargetCell(int[] part)
    {
        var byColour = (int[])part.Clone();
        var keys = new UInt128[part.Length];
        for (var i = 0; i < part.Length; i++) keys[i] = _colour[part[i]];
        Array.Sort(keys, byColour);
        int bestStart = 0, bestLength = int.MaxValue;
        for (var start = 0; start < byColour.Length;)
        {
            var end = start + 1;
            while (end < byColour.Length && keys[end] == keys[start]) end++;
            if (end - start < bestLength)
            {
                bestStart = start;
                bestLength = end - start;
            }
            start = end;
        }
        var cell = byColour.AsSpan(bestStart, bestLength).ToArray();
        Array.Sort(cell);
        return cell;
    }

    private void Individualise(int v) => _colour[v] = Colours.Combine(_colour[v], 0, Colours.Individualised);

    /// <summary>Forward and backward passes until the number of colours among <paramref name="nodes"/> stops growing.</summary>
    private void Refine(int[] nodes)
    {
        var classes = CountColours(nodes);
        if (classes == nodes.Length) return;
        var work = 0;
        foreach (var v in nodes) work += 1 + _in[v].Length + _out[v].Length;
        while (true)
        {
            foreach (var v in nodes)
            {
                UInt128 sum = 0;
                var inputs = _in[v];
                var spreads = _inSpread[v];
                for (var k = 0; k < inputs.Length; k++) sum += Colours.Spread(_colour[inputs[k]] + spreads[k]);
                _colour[v] = Colours.Combine(_colour[v], sum, Colours.Forward);
            }
            for (var i = nodes.Length - 1; i >= 0; i--)
            {
                var v = nodes[i];
                UInt128 sum = 0;
                var consumers = _out[v];
                var spreads = _outSpread[v];
                for (var k = 0; k < consumers.Length; k++) sum += Colours.Spread(_colour[consumers[k]] + spreads[k]);
                _colour[v] = Colours.Combine(_colour[v], sum, Colours.Backward);
            }
            _budget.Spend(work);
            var next = CountColours(nodes);
            if (next == classes || next == nodes.Length) return;
            classes = next;
        }
    }

    private int CountColours(int[] nodes)
    {
        var span = _scratch.AsSpan(0, nodes.Length);
        for (var i = 0; i < nodes.Length; i++) span[i] = _colour[nodes[i]];
        span.Sort();
        var count = nodes.Length == 0 ? 0 : 1;
        for (var i = 1; i < span.Length; i++)
            if (span[i] != span[i - 1]) count++;
        return count;
    }

    /// <summary>
    /// Exact description of the nodes in <paramref name="order"/> under the current colours: each
    /// node's colour, then each node's inputs among them as (position, edge label), with multiplicity. Edges to
    /// nodes outside are fixed by the colours, because the colouring is equitable.
    /// </summary>
    private ulong[] Certificate(int[] order)
    {
        var stamp = ++_stamp;
        for (var i = 0; i < order.Length; i++)
        {
            _mark[order[i]] = stamp;
            _position[order[i]] = i;
        }
        var words = new List<ulong>(order.Length * 4);
        foreach (var v in order)
        {
            words.Add((ulong)(_colour[v] >> 64));
            words.Add((ulong)_colour[v]);
        }
        var edges = new List<ulong>();
        foreach (var v in order)
        {
            edges.Clear();
            var inputs = _in[v];
            for (var k = 0; k < inputs.Length; k++)
                if (_mark[inputs[k]] == stamp) edges.Add(((ulong)(uint)_position[inputs[k]] << 32) | (uint)_inLabel[v][k]);
            edges.Sort();
            words.Add((ulong)edges.Count);
            words.AddRange(edges);
        }
        return [.. words];
    }

    private static int Compare(ulong[] a, ulong[] b)
    {
        var c = a.Length.CompareTo(b.Length);
        return c != 0 ? c : a.AsSpan().SequenceCompareTo(b);
    }

    private UInt128[] Save(int[] nodes)
    {
        var saved = new UInt128[nodes.Length];
        for (var i = 0; i < nodes.Length; i++) saved[i] = _colour[nodes[i]];
        return saved;
    }

    private void Restore(int[] nodes, UInt128[] saved)
    {
        for (var i = 0; i < nodes.Length; i++) _colour[nodes[i]] = saved[i];
    }

    /// <summary>The automorphism taking the node at each position of <paramref name="from"/> to the node at that position of <paramref name="to"/>, as (from, to) pairs of moved nodes.</summary>
    private static int[] Map(int[] from, int[] to)
    {
        var pairs = new List<int>();
        for (var i = 0; i < from.Length; i++)
            if (from[i] != to[i]) { pairs.Add(from[i]); pairs.Add(to[i]); }
        return [.. pairs];
    }

    private static int[] Swap(int[] a, int[] b)
    {
        var pairs = new int[a.Length * 4];
        for (var i = 0; i < a.Length; i++)
        {
            pairs[4 * i] = a[i];
            pairs[4 * i + 1] = b[i];
            pairs[4 * i + 2] = b[i];
            pairs[4 * i + 3] = a[i];
        }
        return pairs;
    }

    private static void AddGenerator(List<int[]> found, Dictionary<int, int> orbit, int[] pairs)
    {
        if (pairs.Length == 0) return;
        found.Add(pairs);
        for (var i = 0; i < pairs.Length; i += 2)
        {
            var a = Find(orbit, pairs[i]);
            var b = Find(orbit, pairs[i + 1]);
            if (a != b) orbit[a] = b;
        }
    }

    private static int Find(Dictionary<int, int> orbit, int v)
    {
        while (orbit.TryGetValue(v, out var parent) && parent != v) v = parent;
        return v;
    }

    private static int Find(int[] parent, int i)
    {
        while (parent[i] != i) i = parent[i] = parent[parent[i]];
        return i;
    }

    private static void Union(int[] parent, int a, int b)
    {
        a = Find(parent, a);
        b = Find(parent, b);
        if (a != b) parent[a] = b;
    }
}
