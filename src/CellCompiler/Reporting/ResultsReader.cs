using System.Text;
using System.Text.Json;
using CellCompiler.Input;
using CellCompiler.Screening;

namespace CellCompiler.Reporting;

/// <summary>
/// Reads `cellc check --json` output (JSON Lines, one record per line) one record at a time, never the
/// whole file. A line that is not a record (not JSON, no `id` or `status`, a figure of the wrong type)
/// is handed to the caller as a <see cref="MalformedLine"/> with its file:line and skipped; blank lines
/// are skipped silently. A line longer than <see cref="ShardMerger.MaxRecordBytes"/> characters is
/// malformed without being held.
/// </summary>
public static class ResultsReader
{
    public static IEnumerable<ResultRow> ReadFile(string path, Action<MalformedLine> malformed)
    {
        StreamReader reader;
        try { reader = new StreamReader(path, Encoding.UTF8, detectEncodingFromByteOrderMarks: true); }
        catch (Exception e) when (e is IOException or UnauthorizedAccessException or ArgumentException or NotSupportedException)
        {
            throw new InputException(path, "", $"cannot read the results file: {e.Message}");
        }
        return ReadAndClose(reader, path, malformed);
    }

    private static IEnumerable<ResultRow> ReadAndClose(StreamReader reader, string path, Action<MalformedLine> malformed)
    {
        using (reader)
            foreach (var row in Read(reader, path, malformed))
                yield return row;
    }

    public static IEnumerable<ResultRow> Read(TextReader reader, string file, Action<MalformedLine> malformed)
    {
        var buffer = new StringBuilder();
        long lineNumber = 0;
        while (true)
        {
            var (complete, tooLong) = BoundedLines.Read(reader, buffer, ShardMerger.MaxRecordBytes);
            if (!complete && buffer.Length == 0 && !tooLong) yield break;
            lineNumber++;
            var place = new LinePlace(file, lineNumber);
            if (tooLong)
            {
                malformed(new MalformedLine(place, $"the line is longer than {ShardMerger.MaxRecordBytes:N0} characters"));
            }
            else if (!string.IsNullOrWhiteSpace(buffer.ToString()))
            {
                var (row, problem) = Parse(buffer.ToString());
                if (row is not null) yield return row;
                else malformed(new MalformedLine(place, problem!));
            }
            if (!complete) yield break;
        }
    }

    /// <summary>One line to a row, or the reason it is not a check record.</summary>
    public static (ResultRow? Row, string? Problem) Parse(string line)
    {
        JsonDocument document;
        try { document = JsonDocument.Parse(line); }
        catch (JsonException e) { return (null, $"not JSON ({JsonProblem(e)})"); }
        using (document)
        {
            var root = document.RootElement;
            if (root.ValueKind != JsonValueKind.Object) return (null, "not a JSON object");
            if (!root.TryGetProperty("id", out var idElement) || idElement.ValueKind != JsonValueKind.String
                || idElement.GetString() is not { Length: > 0 } id)
                return (null, "no `id` (a non-empty string)");
            if (!root.TryGetProperty("status", out var statusElement) || statusElement.ValueKind != JsonValueKind.String)
                return (null, "no `status` (a string)");
            if (ParseStatus(statusElement.GetString()!) is not { } status)
                return (null, $"unknown status '{statusElement.GetString()}' (expected ok, over_budget, broken or invalid)");

            string? problem = null;
            string? Text(string name)
            {
                if (!root.TryGetProperty(name, out var e) || e.ValueKind == JsonValueKind.Null) return null;
                if (e.ValueKind == JsonValueKind.String) return e.GetString();
                problem ??= $"`{name}` is not a string";
                return null;
            }
            long? Whole(string name)
            {
                if (!root.TryGetProperty(name, out var e) || e.ValueKind == JsonValueKind.Null) return null;
                if (e.ValueKind == JsonValueKind.Number && e.TryGetInt64(out var v) && v >= 0) return v;
                problem ??= $"`{name}` is not a whole number of at least 0";
                return null;
            }
            double? Real(string name)
            {
                if (!root.TryGetProperty(name, out var e) || e.ValueKind == JsonValueKind.Null) return null;
                if (e.ValueKind == JsonValueKind.Number && e.TryGetDouble(out var v) && double.IsFinite(v) && v >= 0) return v;
                problem ??= $"`{name}` is not a number of at least 0";
                return null;
            }

            var reason = Text("reason");
            var row = new ResultRow(
                id,
                Text("name"),
                Text("hash"),
                status,
                reason,
                ReasonKinds.Of(status, reason),
                Whole("params"),
                Whole("macs"),
                Whole("peak_activation_bytes"),
                Whole("train_memory_bytes"),
                Whole("onnx_bytes"),
                Real("latency_ms"),
                root.TryGetProperty("cached", out var cached) && cached.ValueKind == JsonValueKind.True);
            return problem is null ? (row, null) : (null, problem);
        }
    }

    /// <summary>The parser's message without its position (one line holds one record, so the line number says where).</summary>
    private static string JsonProblem(JsonException e)
    {
        var message = e.Message;
        var cut = message.IndexOf(" LineNumber:", StringComparison.Ordinal);
        if (cut > 0) message = message[..cut];
        message = message.TrimEnd('.', ' ');
        return e.BytePositionInLine is { } column ? $"{message} at character {column + 1}" : message;
    }

    public static CheckStatus? ParseStatus(string name) => name switch
    {
        "ok" => CheckStatus.Ok,
        "over_budget" => CheckStatus.OverBudget,
        "broken" => CheckStatus.Broken,
        "invalid" => CheckStatus.Invalid,
        _ => null,
    };

}
