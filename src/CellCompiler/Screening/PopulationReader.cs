using System.Text.Json;
using CellCompiler.Input;
using CellCompiler.Io;

namespace CellCompiler.Screening;

/// <summary>
/// Reads a population (JSON Lines, one genotype per line) incrementally through <see cref="JsonLines"/>:
/// one candidate at a time, never the whole input, and never more than the 1 MiB limit of one line in
/// memory. A bad line becomes an invalid candidate; reading goes on. Default ids are `line-N`
/// (N counts physical lines from 1), behind <c>idPrefix</c> when several inputs are read together.
/// </summary>
public static class PopulationReader
{
    /// <summary>Told with the reason of a line that is not even JSON, which is what a pretty-printed genotype gives.</summary>
    public const string OneObjectPerLineHint =
        "JSON Lines needs each genotype as one whole object on one line; check a pretty-printed genotype as a file (cellc check FILE.json) or write it on one line";

    public static IEnumerable<Candidate> Read(Stream stream, string origin, string idPrefix = "")
    {
        foreach (var line in JsonLines.Read(stream, origin, Limits.MaxJsonBytes))
            if (FromLine(line, origin, idPrefix) is { } candidate) yield return candidate;
    }

    public static IEnumerable<Candidate> ReadFile(string path, string idPrefix = "")
    {
        foreach (var line in JsonLines.ReadFile(path, Limits.MaxJsonBytes))
            if (FromLine(line, path, idPrefix) is { } candidate) yield return candidate;
    }

    /// <summary>The candidate of one line; null for a blank line.</summary>
    public static Candidate? FromLine(JsonLine line, string origin, string idPrefix = "")
    {
        if (line.IsBlank) return null;
        var defaultId = $"{idPrefix}line-{line.Number}";
        var lineOrigin = $"{origin} line {line.Number}";
        var place = new LinePlace(origin, line.Number);
        if (line.TooLong)
            return Candidate.Invalid(defaultId, new InputException(lineOrigin, "",
                $"the line is longer than the {Limits.MaxJsonBytes:N0}-byte limit"), place);
        return Parse(line.Bytes, lineOrigin, defaultId) with { Place = place };
    }

    public static Candidate Parse(ReadOnlyMemory<byte> utf8, string origin, string defaultId)
    {
        try
        {
            var genotype = GenotypeReader.Parse(utf8, origin, defaultId);
            return Candidate.Valid(genotype.Id ?? defaultId, genotype);
        }
        catch (InputException e)
        {
            var (id, isJson) = RecoverId(utf8);
            if (!isJson && e.JsonPath.Length == 0)
                e = new InputException(e.Origin, e.JsonPath, $"{e.Problem} ({OneObjectPerLineHint})");
            return Candidate.Invalid(id ?? defaultId, e);
        }
        catch (Exception e) when (e is InvalidOperationException or ArgumentException or FormatException)
        {
            // Whatever a line holds, it is that candidate's problem, never the run's.
            return Candidate.Invalid(defaultId, new InputException(origin, "", $"unreadable line: {e.Message}"));
        }
    }

    /// <summary>
    /// The id `cellc check` gives the candidate of one population line without parsing the genotype:
    /// a valid genotype's id always passes <see cref="RecoverId"/>, and an invalid line keeps what it recovers.
    /// </summary>
    public static string IdOf(ReadOnlyMemory<byte> utf8, string defaultId) => RecoverId(utf8).Id ?? defaultId;

    /// <summary>
    /// Keeps the user's id on an invalid line when the line is JSON enough to hold a usable one (1 to
    /// 256 characters, no control characters, whole Unicode); also tells whether the line is JSON at all.
    /// </summary>
    private static (string? Id, bool IsJson) RecoverId(ReadOnlyMemory<byte> utf8)
    {
        try
        {
            using var document = JsonDocument.Parse(utf8);
            if (document.RootElement.ValueKind == JsonValueKind.Object && document.RootElement.TryGetProperty("id", out var id))
                return (id.ValueKind switch
                {
                    JsonValueKind.String when id.GetString() is { Length: > 0 and <= 256 } text && IsUsableId(text) => text,
                    JsonValueKind.Number => id.GetRawText(),
                    _ => null,
                }, true);
            return (null, true);
        }
        catch (Exception e) when (e is JsonException or InvalidOperationException or ArgumentException) { return (null, false); }
    }

    /// <summary>No control characters and no lone surrogates: an id is printed, and used as a key in files.</summary>
    public static bool IsUsableId(string text)
    {
        for (var i = 0; i < text.Length; i++)
        {
            var c = text[i];
            if (char.IsControl(c)) return false;
            if (char.IsHighSurrogate(c) && i + 1 < text.Length && char.IsLowSurrogate(text[i + 1])) { i++; continue; }
            if (char.IsSurrogate(c)) return false;
        }
        return true;
    }
}
