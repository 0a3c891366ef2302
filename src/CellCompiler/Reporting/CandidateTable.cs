namespace CellCompiler.Reporting;

/// <summary>
/// The rows of the report's candidate table, bounded: up to <see cref="Limit"/> rows are kept in the
/// order they were read; past it, only the first <see cref="Limit"/> by status (ok first) then params
/// (smallest first, candidates without figures last) are kept, so memory stays bounded whatever the
/// size of the results file.
/// </summary>
public sealed class CandidateTable
{
    private readonly List<(ResultRow Row, long Order)> _rows = [];
    private PriorityQueue<(ResultRow Row, long Order), (ResultRow Row, long Order)>? _best;

    public CandidateTable(int limit)
    {
        ArgumentOutOfRangeException.ThrowIfLessThan(limit, 1);
        Limit = limit;
    }

    public int Limit { get; }

    /// <summary>How many rows were offered.</summary>
    public long Seen { get; private set; }

    /// <summary>More rows were offered than the table keeps.</summary>
    public bool Capped => Seen > Limit;

    public void Add(ResultRow row)
    {
        var entry = (row, Seen++);
        if (_best is null)
        {
            _rows.Add(entry);
            if (_rows.Count <= Limit) return;
            // The worst kept row sits at the head of this queue, so it is the one to drop.
            _best = new PriorityQueue<(ResultRow, long), (ResultRow, long)>(Limit + 1, Comparer<(ResultRow Row, long Order)>.Create((a, b) => Compare(b, a)));
            foreach (var kept in _rows) _best.Enqueue(kept, kept);
            _rows.Clear();
            _rows.TrimExcess();
            _best.Dequeue();
            return;
        }
        if (Compare(entry, _best.Peek()) < 0) _best.EnqueueDequeue(entry, entry);
    }

    /// <summary>The kept rows: in reading order, or (when capped) by status then params.</summary>
    public IReadOnlyList<ResultRow> Rows()
    {
        if (_best is null) return _rows.Select(r => r.Row).ToList();
        var rows = _best.UnorderedItems.Select(i => i.Element).ToList();
        rows.Sort(Compare);
        return rows.Select(r => r.Row).ToList();
    }

    private static int Compare((ResultRow Row, long Order) a, (ResultRow Row, long Order) b)
    {
        var byStatus = a.Row.Status.CompareTo(b.Row.Status);
        if (byStatus != 0) return byStatus;
        var byParams = (a.Row.Params ?? long.MaxValue).CompareTo(b.Row.Params ?? long.MaxValue);
        return byParams != 0 ? byParams : a.Order.CompareTo(b.Order);
    }
}
