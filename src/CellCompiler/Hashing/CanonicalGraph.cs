using System.Text;

namespace CellCompiler.Hashing;

/// <summary>
/// Canonical text of a small labelled two-terminal DAG: equal for graphs that differ only by a
/// renumbering of inner nodes. Colour refinement splits nodes by their labelled neighbourhoods;
/// remaining ties are broken by trying every candidate (twins are tried once) and keeping the
/// smallest certificate, so the result is exact while the search stays within its budget.
/// </summary>
internal sealed class CanonicalGraph
{
    /// <summary>Complete labellings tried per motif; past it, ties are broken by the first candidate only.</summary>
    public const int LeafBudgetPerMotif = 512;

    private readonly int _nodeCount;
    private readonly (int From, int To, string Label)[] _edges;
    private readonly List<(int Node, string Label)>[] _in;
    private readonly List<(int Node, string Label)>[] _out;
    private readonly SearchBudget _budget;
    private string? _best;
    private int _leaves;

    /// <summary>Nodes are 0.._nodeCount-1 with 0 the input and _nodeCount-1 the output.</summary>
    public CanonicalGraph(int nodeCount, IEnumerable<(int From, int To, string Label)> edges, SearchBudget budget)
    {
        _budget = budget;
        _nodeCount = nodeCount;
        _edges = edges.ToArray();
        _in = new List<(int, string)>[nodeCount];
        _out = new List<(int, string)>[nodeCount];
        for (var v = 0; v < nodeCount; v++) { _in[v] = []; _out[v] = []; }
        foreach (var (from, to, label) in _edges)
        {
            _out[from].Add((to, label));
            _in[to].Add((from, label));
        }
    }

    /// <summary>True once the search had to stop exploring ties; the certificate is then deterministic but not canonical.</summary>
    public bool BudgetExceeded => _leaves >= LeafBudgetPerMotif || _budget.Exhausted;

    public string Certificate()
    {
        var colours = new int[_nodeCount];
        for (var v = 1; v < _nodeCount - 1; v++) colours[v] = 1;
        colours[_nodeCount - 1] = 2;
        Search(colours);
        return _best!;
    }

    private void Search(int[] colours)
    {
        colours = Refine(colours);
        var cell = FirstTiedColour(colours);
        if (cell < 0)
        {
            _leaves++;
            _budget.Spend();
            var certificate = Describe(colours);
            if (_best is null || string.CompareOrdinal(certificate, _best) < 0) _best = certificate;
            return;
        }
        var tried = new List<int>();
        for (var v = 0; v < _nodeCount; v++)
        {
            if (colours[v] != cell || tried.Any(u => AreTwins(u, v))) continue;
            if (tried.Count > 0 && BudgetExceeded) break;
            tried.Add(v);
            var next = new int[_nodeCount];
            for (var u = 0; u < _nodeCount; u++) next[u] = colours[u] * 2 + (u == v ? 0 : 1);
            Search(next);
        }
    }

    /// <summary>Twins have the same labelled neighbours, so swapping them is an automorphism: one branch suffices.</summary>
    private bool AreTwins(int a, int b) =>
        SameNeighbours(_in[a], _in[b], a, b) && SameNeighbours(_out[a], _out[b], a, b);

    private static bool SameNeighbours(List<(int Node, string Label)> x, List<(int Node, string Label)> y, int a, int b)
    {
        if (x.Count != y.Count) return false;
        static string Key((int Node, string Label) e, int a, int b) => $"{(e.Node == a || e.Node == b ? -1 : e.Node)}\u0001{e.Label}";
        var left = x.Select(e => Key(e, a, b)).Order(StringComparer.Ordinal);
        var right = y.Select(e => Key(e, a, b)).Order(StringComparer.Ordinal);
        return left.SequenceEqual(right);
    }

    private int FirstTiedColour(int[] colours)
    {
        var counts = new Dictionary<int, int>();
        foreach (var c in colours) counts[c] = counts.GetValueOrDefault(c) + 1;
        var tied = counts.Where(kv => kv.Value > 1).Select(kv => kv.Key).ToList();
        return tied.Count == 0 ? -1 : tied.Min();
    }

    /// <summary>Splits colour classes by the multiset of (label, neighbour colour) until stable; new colours are ranks of sorted signatures, so they do not depend on numbering.</summary>
    private int[] Refine(int[] colours)
    {
        var classes = colours.Distinct().Count();
        while (true)
        {
            var signatures = new string[_nodeCount];
            for (var v = 0; v < _nodeCount; v++)
            {
                var sb = new StringBuilder();
                sb.Append(colours[v]).Append("|<");
                foreach (var s in _in[v].Select(e => $"{e.Label}@{colours[e.Node]}").Order(StringComparer.Ordinal)) sb.Append(s).Append(',');
                sb.Append("|>");
                foreach (var s in _out[v].Select(e => $"{e.Label}@{colours[e.Node]}").Order(StringComparer.Ordinal)) sb.Append(s).Append(',');
                signatures[v] = sb.ToString();
            }
            // Order by old colour first so refinement only splits classes and never reorders them.
            var ranks = signatures.Select((s, v) => (colours[v], s)).Distinct()
                .OrderBy(p => p.Item1).ThenBy(p => p.s, StringComparer.Ordinal)
                .Select((p, rank) => (p.s, rank)).ToDictionary(p => p.s, p => p.rank, StringComparer.Ordinal);
            var next = signatures.Select(s => ranks[s]).ToArray();
            if (ranks.Count == classes) return next;
            classes = ranks.Count;
            colours = next;
        }
    }

    private string Describe(int[] colours)
    {
        var sb = new StringBuilder();
        sb.Append(_nodeCount).Append(';');
        foreach (var e in _edges.Select(e => $"{colours[e.From]}>{colours[e.To]}:{e.Label}").Order(StringComparer.Ordinal))
            sb.Append(e).Append(';');
        return sb.ToString();
    }
}
