using System.Text.Json;
using System.Text.Json.Serialization;

namespace CellCompiler.Screening;

/// <summary>Outcome of screening one candidate, from best to worst.</summary>
[JsonConverter(typeof(CheckStatusJsonConverter))]
public enum CheckStatus
{
    /// <summary>Works and fits every budget.</summary>
    Ok,
    /// <summary>Works but exceeds a budget.</summary>
    OverBudget,
    /// <summary>Valid, but no working network: dead cell, runtime failure, non-finite or input-independent output.</summary>
    Broken,
    /// <summary>The genotype does not parse or validate.</summary>
    Invalid,
}

/// <summary>The statuses' names as records and people read them: the one place they are written and parsed.</summary>
public static class CheckStatusNames
{
    public static readonly IReadOnlyList<CheckStatus> All = [CheckStatus.Ok, CheckStatus.OverBudget, CheckStatus.Broken, CheckStatus.Invalid];

    public static string Name(this CheckStatus status) => status switch
    {
        CheckStatus.Ok => "ok",
        CheckStatus.OverBudget => "over_budget",
        CheckStatus.Broken => "broken",
        CheckStatus.Invalid => "invalid",
        _ => throw new ArgumentOutOfRangeException(nameof(status), status, "unknown check status"),
    };

    public static CheckStatus? Parse(string? name) => name switch
    {
        "ok" => CheckStatus.Ok,
        "over_budget" => CheckStatus.OverBudget,
        "broken" => CheckStatus.Broken,
        "invalid" => CheckStatus.Invalid,
        _ => null,
    };
}

/// <summary>Reads and writes a status by its name; an unknown name is an error, never a default.</summary>
public sealed class CheckStatusJsonConverter : JsonConverter<CheckStatus>
{
    public override CheckStatus Read(ref Utf8JsonReader reader, Type typeToConvert, JsonSerializerOptions options)
    {
        if (reader.TokenType != JsonTokenType.String) throw new RecordFieldException("'status' is not a string");
        var name = reader.GetString();
        return CheckStatusNames.Parse(name)
               ?? throw new RecordFieldException($"unknown status '{name}' (expected ok, over_budget, broken or invalid)");
    }

    public override void Write(Utf8JsonWriter writer, CheckStatus value, JsonSerializerOptions options) =>
        writer.WriteStringValue(value.Name());
}
