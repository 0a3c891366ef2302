using System.Text.Json;

namespace CellCompiler.Screening;

/// <summary>What a record already in a results file says, as far as a resumed run's summary needs it.</summary>
public sealed record PreviousRecord(string Id, string Status, string? ReasonKind, long? Params, long? Macs, double? LatencyMs)
{
    /// <summary>Null unless the line is a JSON object with a string id and a known status.</summary>
    public static PreviousRecord? Parse(ReadOnlySpan<byte> line)
    {
        try
        {
            using var document = JsonDocument.Parse(line.ToArray());
            var root = document.RootElement;
            if (root.ValueKind != JsonValueKind.Object) return null;
            if (!root.TryGetProperty("id", out var id) || id.ValueKind != JsonValueKind.String) return null;
            if (!root.TryGetProperty("status", out var status) || status.ValueKind != JsonValueKind.String) return null;
            if (!Enum.GetValues<CheckStatus>().Any(s => s.Name() == status.GetString())) return null;
            return new PreviousRecord(id.GetString()!, status.GetString()!,
                String(root, "reason_kind") ?? String(root, "reason"), Long(root, "params"), Long(root, "macs"), Double(root, "latency_ms"));
        }
        catch (Exception e) when (e is JsonException or InvalidOperationException) { return null; }
    }

    private static string? String(JsonElement root, string name) =>
        root.TryGetProperty(name, out var value) && value.ValueKind == JsonValueKind.String ? value.GetString() : null;

    private static long? Long(JsonElement root, string name) =>
        root.TryGetProperty(name, out var value) && value.ValueKind == JsonValueKind.Number && value.TryGetInt64(out var n) ? n : null;

    private static double? Double(JsonElement root, string name) =>
        root.TryGetProperty(name, out var value) && value.ValueKind == JsonValueKind.Number ? value.GetDouble() : null;
}
