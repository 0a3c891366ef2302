using CellCompiler.Io;

namespace CellCompiler.Screening;

/// <summary>
/// The ids met so far and where each was first seen, to report an id that appears again (results
/// and resuming match candidates by id, so a repeated id is never silently accepted).
/// </summary>
public sealed class IdRegistry
{
    private readonly Dictionary<string, LinePlace> _first = new(StringComparer.Ordinal);

    public long Repeats { get; private set; }

    /// <summary>Records an id; returns where it was first seen if it was seen before.</summary>
    public LinePlace? Add(string id, LinePlace place)
    {
        if (_first.TryAdd(id, place)) return null;
        Repeats++;
        return _first[id];
    }
}
