namespace CellCompiler.Screening;

/// <summary>
/// Candidates not dominated in two figures to minimise (e.g. params and MACs), kept incrementally so
/// that only the front, never the whole population, is held. Of candidates with exactly equal
/// figures (typically equivalent genotypes) the first is kept and the others are counted.
/// </summary>
public sealed class ParetoFront
{
    private readonly List<Point> _points = [];

    public sealed record Point(string Id, double X, double Y)
    {
        /// <summary>Other candidates with exactly these figures.</summary>
        public long Ties { get; set; }
    }

    public IReadOnlyList<Point> Points =>
        _points.OrderBy(p => p.X).ThenBy(p => p.Y).ThenBy(p => p.Id, StringComparer.Ordinal).ToList();

    public void Add(string id, double x, double y)
    {
        foreach (var p in _points)
        {
            if (p.X == x && p.Y == y)
            {
                p.Ties++;
                return;
            }
            if (p.X <= x && p.Y <= y) return;
        }
        _points.RemoveAll(p => x <= p.X && y <= p.Y);
        _points.Add(new Point(id, x, y));
    }
}
