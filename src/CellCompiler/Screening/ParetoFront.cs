namespace CellCompiler.Screening;

/// <summary>
/// Candidates not dominated in two figures to minimise (e.g. params and MACs), kept incrementally so
/// that only the front, never the whole population, is held. Exact ties all stay on the front.
/// </summary>
public sealed class ParetoFront
{
    private readonly List<(string Id, double X, double Y)> _points = [];

    public IReadOnlyList<(string Id, double X, double Y)> Points =>
        _points.OrderBy(p => p.X).ThenBy(p => p.Y).ThenBy(p => p.Id, StringComparer.Ordinal).ToList();

    public void Add(string id, double x, double y)
    {
        foreach (var p in _points)
            if (p.X <= x && p.Y <= y && (p.X < x || p.Y < y)) return;
        _points.RemoveAll(p => x <= p.X && y <= p.Y && (x < p.X || y < p.Y));
        _points.Add((id, x, y));
    }
}
