using System.Text;
using System.Text.Json;
using System.Text.Json.Serialization;
using CellCompiler.Io;
using CellCompiler.Runtime;

namespace CellCompiler.Screening;

/// <summary>
/// The one serializer and reader of <see cref="CheckRecord"/> lines. Reading is strict about what it
/// knows (an `id` that is a non-empty string, a known `status`, figures of the right types, no key
/// twice) and skips fields it does not know, so files written by a later version still read.
/// </summary>
public static class CheckRecordJson
{
    /// <summary>A check record is a few KiB; a longer line is malformed without being held.</summary>
    public const int MaxLineBytes = 16 << 20;

    public static string ToLine(CheckRecord record) => Encoding.UTF8.GetString(ToUtf8(record));

    public static byte[] ToUtf8(CheckRecord record) => JsonSerializer.SerializeToUtf8Bytes(record, ScreeningJson.Readable.CheckRecord);

    /// <summary>The record on one line, or why the line is not a check record.</summary>
    public static CheckRecord? Read(ReadOnlySpan<byte> line, out string? problem)
    {
        problem = null;
        CheckRecord? record;
        try { record = JsonSerializer.Deserialize(line, ScreeningJson.Readable.CheckRecord); }
        catch (JsonException e) { problem = Describe(e); return null; }
        catch (InvalidOperationException e) { problem = $"not a check record: {e.Message}"; return null; }
        catch (ArgumentException e) { problem = $"not valid text: {e.Message}"; return null; }
        if (record is null) { problem = "not a JSON object (null)"; return null; }
        if (record.Id.Length == 0) { problem = "'id' is an empty string"; return null; }
        return record;
    }

    /// <summary>The record on one line of a results file, or why the line is not one (a line over the limit included).</summary>
    public static CheckRecord? Read(JsonLine line, out string? problem)
    {
        if (!line.TooLong) return Read(line.Bytes.Span, out problem);
        problem = $"the line is longer than the {MaxLineBytes:N0}-byte limit";
        return null;
    }

    /// <summary>Every record of a results file, line by line; lines that are not records go to <paramref name="malformed"/>.</summary>
    public static IEnumerable<CheckRecord> ReadFile(string path, Action<MalformedLine> malformed)
    {
        foreach (var line in JsonLines.ReadFile(path, MaxLineBytes))
            if (FromLine(path, line, malformed) is { } record) yield return record;
    }

    public static IEnumerable<CheckRecord> Read(Stream stream, string origin, Action<MalformedLine> malformed)
    {
        foreach (var line in JsonLines.Read(stream, origin, MaxLineBytes))
            if (FromLine(origin, line, malformed) is { } record) yield return record;
    }

    private static CheckRecord? FromLine(string origin, JsonLine line, Action<MalformedLine> malformed)
    {
        if (line.IsBlank) return null;
        var record = Read(line, out var problem);
        if (record is null) malformed(new MalformedLine(new LinePlace(origin, line.Number), problem!));
        return record;
    }

    /// <summary>What a field of a record holds, from the record's own type (so that a new field needs no entry here).</summary>
    private static string Expected(string field)
    {
        var top = field.Split('.', '[')[0];
        var type = ScreeningJson.Readable.CheckRecord.Properties.FirstOrDefault(p => p.Name == top)?.PropertyType;
        type = type is null ? null : Nullable.GetUnderlyingType(type) ?? type;
        if (top != field) return "of the expected type";
        return type switch
        {
            null => "of the expected type",
            _ when type == typeof(string) => "a string",
            _ when type == typeof(long) || type == typeof(int) => "a whole number",
            _ when type == typeof(double) => "a number",
            _ when type == typeof(bool) => "true or false",
            _ when typeof(System.Collections.IDictionary).IsAssignableFrom(type) || type.Name.Contains("Dictionary", StringComparison.Ordinal) => "an object",
            _ when typeof(System.Collections.IEnumerable).IsAssignableFrom(type) => "a list",
            _ => "an object",
        };
    }

    /// <summary>A parser message in our words, without .NET type names or positions.</summary>
    private static string Describe(JsonException e)
    {
        var message = e.Message;
        var cut = message.IndexOf(" Path: $", StringComparison.Ordinal);
        if (cut >= 0) message = message[..cut];
        if (e is RecordFieldException) return message;
        var field = e.Path is { Length: > 2 } path && path.StartsWith("$.", StringComparison.Ordinal) ? path[2..] : null;
        if (message.Contains("missing required properties", StringComparison.Ordinal))
            return message.Contains("'id'", StringComparison.Ordinal) ? "no 'id' field" : "no 'status' field";
        if (message.Contains("Duplicate", StringComparison.OrdinalIgnoreCase))
            return $"a key appears more than once{(field is null ? "" : $" ('{field}')")}";
        if (message.Contains("could not be converted to CellCompiler", StringComparison.Ordinal) && field is null)
            return "not a JSON object";
        if (field is not null && message.Contains("null", StringComparison.OrdinalIgnoreCase) && message.Contains("allow", StringComparison.Ordinal))
            return $"'{field}' is null";
        if (field is not null && message.Contains("could not be converted to", StringComparison.Ordinal))
            return $"'{field}' is not {Expected(field)}";
        return $"not valid JSON (at character {(e.BytePositionInLine ?? 0) + 1})";
    }
}

/// <summary>A field of a record that our own converters refuse; its message is already in our words.</summary>
public sealed class RecordFieldException(string message) : JsonException(message);

/// <summary>Writes an output shape as ["N", d1, d2, ...] and reads it back.</summary>
public sealed class OutputShapeJsonConverter : JsonConverter<int[]>
{
    public override int[] Read(ref Utf8JsonReader reader, Type typeToConvert, JsonSerializerOptions options)
    {
        if (reader.TokenType != JsonTokenType.StartArray) throw new RecordFieldException("'output_shape' is not an array");
        var dims = new List<int>();
        var first = true;
        while (reader.Read() && reader.TokenType != JsonTokenType.EndArray)
        {
            if (first && reader.TokenType == JsonTokenType.String) { first = false; continue; }
            first = false;
            if (reader.TokenType != JsonTokenType.Number || !reader.TryGetInt32(out var d))
                throw new RecordFieldException("'output_shape' holds something other than \"N\" and whole numbers");
            dims.Add(d);
        }
        return [.. dims];
    }

    public override void Write(Utf8JsonWriter writer, int[] value, JsonSerializerOptions options)
    {
        writer.WriteStartArray();
        writer.WriteStringValue("N");
        foreach (var d in value) writer.WriteNumberValue(d);
        writer.WriteEndArray();
    }
}

/// <summary>
/// System.Text.Json source generation for everything screening writes and reads: check records,
/// the cache's entries and the run settings beside a results file. Compact, readable non-ASCII.
/// </summary>
[JsonSourceGenerationOptions(
    PropertyNamingPolicy = JsonKnownNamingPolicy.SnakeCaseLower,
    RespectNullableAnnotations = true,
    AllowDuplicateProperties = false,
    NumberHandling = JsonNumberHandling.Strict)]
[JsonSerializable(typeof(CheckRecord))]
[JsonSerializable(typeof(Evaluation))]
[JsonSerializable(typeof(LatencyReport))]
[JsonSerializable(typeof(ScreeningSettings))]
public sealed partial class ScreeningJson : JsonSerializerContext
{
    /// <summary>The context to use: as <see cref="JsonSerializerContext"/> Default, with non-ASCII text written as it is (no \u escapes).</summary>
    public static ScreeningJson Readable => s_readable ??= new(new JsonSerializerOptions(Default.Options)
    {
        Encoder = System.Text.Encodings.Web.JavaScriptEncoder.UnsafeRelaxedJsonEscaping,
    });

    // Made on first use: a static initializer here would run before the generated Default exists.
    private static ScreeningJson? s_readable;
}
