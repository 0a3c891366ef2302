using System.Text;
using System.Text.Json;
using CellCompiler.Input;

namespace CellCompiler.Screening;

/// <summary>
/// Reads a population (JSON Lines, one genotype per line) incrementally: one candidate at a time,
/// never the whole file, and never more than the 1 MiB limit of one line in memory. A bad line
/// becomes an invalid candidate; reading goes on.
/// </summary>
public static class PopulationReader
{
    public static IEnumerable<Candidate> Read(TextReader reader, string origin)
    {
        var lineNumber = 0;
        var buffer = new StringBuilder();
        while (true)
        {
            var (complete, tooLong) = BoundedLines.Read(reader, buffer, Limits.MaxJsonBytes);
            if (!complete && buffer.Length == 0 && !tooLong) yield break;
            lineNumber++;
            var defaultId = $"line-{lineNumber}";
            var lineOrigin = $"{origin} line {lineNumber}";
            if (tooLong)
            {
                yield return Candidate.Invalid(defaultId, new InputException(lineOrigin, "",
                    $"the line is longer than the {Limits.MaxJsonBytes:N0}-byte limit"));
            }
            else if (!string.IsNullOrWhiteSpace(buffer.ToString()))
            {
                yield return Parse(Encoding.UTF8.GetBytes(buffer.ToString()), lineOrigin, defaultId);
            }
            if (!complete) yield break;
        }
    }

    public static Candidate Parse(byte[] utf8, string origin, string defaultId)
    {
        try
        {
            var genotype = GenotypeReader.Parse(utf8, origin, defaultId);
            return Candidate.Valid(genotype.Id ?? defaultId, genotype);
        }
        catch (InputException e)
        {
            return Candidate.Invalid(RecoverId(utf8) ?? defaultId, e);
        }
        catch (Exception e) when (e is InvalidOperationException or ArgumentException or FormatException)
        {
            // Whatever a line holds, it is that candidate's problem, never the run's.
            return Candidate.Invalid(defaultId, new InputException(origin, "", $"unreadable line: {e.Message}"));
        }
    }

    /// <summary>Keeps the user's id on an invalid line when the line is JSON enough to hold one.</summary>
    private static string? RecoverId(byte[] utf8)
    {
        try
        {
            using var document = JsonDocument.Parse(utf8);
            if (document.RootElement.ValueKind == JsonValueKind.Object && document.RootElement.TryGetProperty("id", out var id))
                return id.ValueKind switch
                {
                    JsonValueKind.String when id.GetString() is { Length: > 0 and <= 256 } text && !text.Any(char.IsSurrogate) => text,
                    JsonValueKind.Number => id.GetRawText(),
                    _ => null,
                };
        }
        catch (Exception e) when (e is JsonException or InvalidOperationException) { }
        return null;
    }

}
