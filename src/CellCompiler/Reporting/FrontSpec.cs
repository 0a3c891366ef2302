using CellCompiler.Screening;

namespace CellCompiler.Reporting;

/// <summary>
/// One Pareto front the report shows: of the ok candidates (trivial cells left out unless asked
/// for), those that no other is better than on both <see cref="X"/> (a cost, less is better) and
/// <see cref="Y"/> (a cost, or an objective to maximise). Kept incrementally in a
/// <see cref="ParetoFront"/>, which minimises both: a maximised Y is fed in negated and turned back
/// in <see cref="Members"/>.
/// </summary>
public sealed class FrontSpec(string key, string title, Measure x, Measure y)
{
    private readonly ParetoFront _front = new();
    private IReadOnlyList<FrontMember>? _members;

    /// <summary>Names the front in the page (`data-front`), e.g. "params-macs".</summary>
    public string Key { get; } = key;

    public string Title { get; } = title;
    public Measure X { get; } = x;
    public Measure Y { get; } = y;

    public void Add(string id, ChartPoint point)
    {
        var (x, y) = (X.Of(point), Y.Of(point));
        if (double.IsNaN(x) || double.IsNaN(y)) return;
        _front.Add(id, x, Y.Maximise ? -y : y);
        _members = null;
    }

    /// <summary>The front, in order of X (least first), with Y as the candidates have it.</summary>
    public IReadOnlyList<FrontMember> Members =>
        _members ??= _front.Points.Select(p => new FrontMember(p.Id, p.X, Y.Maximise ? -p.Y : p.Y, p.Ties)).ToList();

    public int Count => Members.Count;
}

/// <summary>A candidate on a front, with its two figures and how many others have exactly the same figures.</summary>
public sealed record FrontMember(string Id, double X, double Y, long Ties);
