using System.Text.Json;
using CellCompiler.Input;
using CellCompiler.Io;

namespace CellCompiler.Reporting;

/// <summary>
/// Metrics brought back for candidates (`cellc report --scores`), by candidate id: e.g. the accuracy
/// each survivor reached in training. <see cref="Metrics"/> lists the metric names in the order they
/// first appear. <see cref="Take"/> marks an id as joined, so the ids no record asked for can be listed.
/// </summary>
public sealed class ScoreTable
{
    private readonly Dictionary<string, Dictionary<string, double>> _byId = new(StringComparer.Ordinal);
    private readonly List<string> _order = [];
    private readonly List<string> _metrics = [];
    private readonly HashSet<string> _joined = new(StringComparer.Ordinal);

    public string Origin { get; }

    public ScoreTable(string origin) => Origin = origin;

    public int Count => _byId.Count;

    public IReadOnlyList<string> Metrics => _metrics;

    public bool HasMetric(string name) => _metrics.Contains(name, StringComparer.Ordinal);

    /// <summary>The metrics of one id (marking it as joined), or null when the file has none for it.</summary>
    public IReadOnlyDictionary<string, double>? Take(string id)
    {
        if (!_byId.TryGetValue(id, out var metrics)) return null;
        _joined.Add(id);
        return metrics;
    }

    /// <summary>Ids of the file that no record took, in file order.</summary>
    public IEnumerable<string> NotJoined => _order.Where(id => !_joined.Contains(id));

    public int NotJoinedCount => _byId.Count - _joined.Count;

    internal void Add(string id, Dictionary<string, double> metrics)
    {
        _byId.Add(id, metrics);
        _order.Add(id);
        foreach (var name in metrics.Keys)
            if (!_metrics.Contains(name, StringComparer.Ordinal)) _metrics.Add(name);
    }

    /// <summary>
    /// Reads a scores file: JSON Lines of {"id": "...", "metric": number, ...} (blank lines allowed).
    /// Every other shape is bad input naming the file, the line and the problem: not JSON, not an
    /// object, no id or an id that is not a non-empty string, a value that is not a number, a key or an
    /// id given twice, a line over the limit, or no scores at all.
    /// </summary>
    public static ScoreTable Read(string path)
    {
        var table = new ScoreTable(path);
        var firstLine = new Dictionary<string, long>(StringComparer.Ordinal);
        foreach (var line in JsonLines.ReadFile(path, MaxLineBytes))
        {
            if (line.IsBlank) continue;
            var origin = $"{path} line {line.Number}";
            if (line.TooLong) throw new InputException(origin, "", $"the line is longer than the {MaxLineBytes:N0}-byte limit");
            var (id, metrics) = ReadLine(line.Bytes.Span, origin);
            if (firstLine.TryGetValue(id, out var first))
                throw new InputException(origin, "id", $"'{id}' has scores on line {first} already; give each id once");
            firstLine[id] = line.Number;
            table.Add(id, metrics);
        }
        if (table.Count == 0) throw new InputException(path, "", "no scores found (expected JSON Lines: {\"id\": ..., \"<metric>\": number, ...})");
        return table;
    }

    /// <summary>A scores line is a few hundred bytes; a megabyte is far past any real one.</summary>
    public const int MaxLineBytes = 1 << 20;

    private static (string Id, Dictionary<string, double> Metrics) ReadLine(ReadOnlySpan<byte> bytes, string origin)
    {
        var reader = new Utf8JsonReader(bytes, new JsonReaderOptions { CommentHandling = JsonCommentHandling.Disallow });
        string? id = null;
        var metrics = new Dictionary<string, double>(StringComparer.Ordinal);
        var seen = new HashSet<string>(StringComparer.Ordinal);
        try
        {
            if (!reader.Read() || reader.TokenType != JsonTokenType.StartObject)
                throw new InputException(origin, "", $"expected a JSON object, found {Describe(reader.TokenType)}");
            while (reader.Read() && reader.TokenType != JsonTokenType.EndObject)
            {
                var key = reader.GetString()!;
                if (!seen.Add(key)) throw new InputException(origin, key, "the key appears more than once");
                reader.Read();
                if (key == "id")
                {
                    if (reader.TokenType != JsonTokenType.String)
                        throw new InputException(origin, "id", $"must be a string, found {Describe(reader.TokenType)}");
                    id = reader.GetString()!;
                    if (id.Length == 0) throw new InputException(origin, "id", "is an empty string");
                    continue;
                }
                if (reader.TokenType != JsonTokenType.Number)
                    throw new InputException(origin, key, $"must be a number, found {Describe(reader.TokenType)}");
                var value = reader.GetDouble();
                if (!double.IsFinite(value)) throw new InputException(origin, key, "is too large to be a finite number");
                metrics[key] = value;
            }
            if (reader.TokenType != JsonTokenType.EndObject || reader.Read())
                throw new InputException(origin, "", "more than one JSON value on the line");
        }
        catch (JsonException e)
        {
            throw new InputException(origin, "", $"not valid JSON (at character {e.BytePositionInLine + 1})");
        }
        catch (InvalidOperationException)
        {
            throw new InputException(origin, "", "not valid UTF-8 text");
        }
        if (id is null) throw new InputException(origin, "", "no 'id' field (each line is {\"id\": ..., \"<metric>\": number, ...})");
        if (metrics.Count == 0) throw new InputException(origin, "", $"'{id}' has no metric besides its id");
        return (id, metrics);
    }

    private static string Describe(JsonTokenType token) => token switch
    {
        JsonTokenType.StartObject => "an object",
        JsonTokenType.StartArray => "an array",
        JsonTokenType.String => "a string",
        JsonTokenType.Number => "a number",
        JsonTokenType.True or JsonTokenType.False => "true or false",
        JsonTokenType.Null => "null",
        JsonTokenType.None => "nothing",
        _ => "something else",
    };
}
