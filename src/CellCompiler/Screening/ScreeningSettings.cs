using System.Text.Json;
using System.Text.Json.Nodes;
using CellCompiler.Input;
using CellCompiler.Io;

namespace CellCompiler.Screening;

/// <summary>The latency settings of a run, as its settings file records them.</summary>
public sealed record LatencyFingerprint(int Threads, IReadOnlyList<int> Batches, int Warmup, int Runs, double MinSeconds);

/// <summary>
/// What a results file was made from: the inputs (paths and content hashes), the skeleton, seed,
/// opset, budgets, training batch, latency settings, node and MAC limits and shard. Kept beside the results
/// as FILE.settings (JSON, stable snake_case names), so that --resume never mixes records of two
/// screenings in one file. The memory and time limits are left out: they follow the machine (a
/// requeued task may land on another one) and only decide whether a too-large candidate is run.
/// </summary>
public sealed record ScreeningSettings
{
    public const string FormatTag = "cellc-check-settings/1";

    /// <summary>A settings file is a few kB; far more is not one.</summary>
    public const int MaxBytes = 16 << 20;

    public string Format { get; init; } = FormatTag;
    public required IReadOnlyList<InputFingerprint> Inputs { get; init; }
    public required JsonElement Skeleton { get; init; }
    public long Seed { get; init; }
    public int Opset { get; init; }
    public required Budgets Budgets { get; init; }
    public int TrainBatch { get; init; }
    public LatencyFingerprint? Latency { get; init; }
    public int MaxRunNodes { get; init; }

    /// <summary>`--max-run-macs` when not the default; written only then, so that settings files made before it existed compare as before.</summary>
    [System.Text.Json.Serialization.JsonIgnore(Condition = System.Text.Json.Serialization.JsonIgnoreCondition.WhenWritingNull)]
    public long? MaxRunMacs { get; init; }
    public bool RunOverBudget { get; init; }
    public required string Shard { get; init; }

    /// <summary>`--static`; written only when set, so that settings files of runs without it compare as before.</summary>
    [System.Text.Json.Serialization.JsonIgnore(Condition = System.Text.Json.Serialization.JsonIgnoreCondition.WhenWritingDefault)]
    public bool Static { get; init; }

    /// <summary>The latency table predictions came from (its full path), and the threads they are for; written only when predicting.</summary>
    [System.Text.Json.Serialization.JsonIgnore(Condition = System.Text.Json.Serialization.JsonIgnoreCondition.WhenWritingNull)]
    public string? LatencyTable { get; init; }

    public static string PathFor(string resultsPath) => resultsPath + ".settings";

    public static ScreeningSettings Of(IReadOnlyList<InputFingerprint> inputs, CheckOptions options, ShardSelector shard)
    {
        var latency = options.EffectiveLatency;
        using var skeleton = JsonDocument.Parse(options.Skeleton.ToJson());
        return new ScreeningSettings
        {
            Inputs = inputs,
            Skeleton = skeleton.RootElement.Clone(),
            Seed = options.Compile.Seed,
            Opset = options.Compile.Opset,
            Budgets = options.Budgets,
            TrainBatch = options.TrainBatch,
            Latency = latency is null ? null : new LatencyFingerprint(latency.Threads, latency.BatchSizes, latency.Warmup, latency.Runs, latency.MinSeconds),
            MaxRunNodes = options.MaxRunNodes,
            MaxRunMacs = options.MaxRunMacs == CheckOptions.DefaultMaxRunMacs ? null : options.MaxRunMacs,
            RunOverBudget = options.RunOverBudget,
            Shard = shard.ToString(),
            Static = options.Static,
            LatencyTable = options.LatencyTablePath is { } table
                ? $"{Path.GetFullPath(table)} ({options.PredictionThreads} thread{(options.PredictionThreads == 1 ? "" : "s")})"
                : null,
        };
    }

    public byte[] ToUtf8() =>
        JsonSerializer.SerializeToUtf8Bytes(this, new JsonSerializerOptions(ScreeningJson.Readable.Options) { WriteIndented = true }.GetTypeInfo(typeof(ScreeningSettings)));

    public void Write(string resultsPath) => AtomicFile.Write(PathFor(resultsPath), [.. ToUtf8(), (byte)'\n']);

    /// <summary>
    /// Refuses to continue a results file made by another screening: other inputs or input content,
    /// or other options. A results file without records may always be continued.
    /// </summary>
    public void RequireSameAs(string resultsPath, bool resultsHoldRecords)
    {
        if (!resultsHoldRecords) return;
        var path = PathFor(resultsPath);
        if (!File.Exists(path))
            throw new InputException(resultsPath, "",
                $"has no settings file beside it ({path}), so what made it cannot be checked; start again without --resume");
        // Bounded while reading: a settings file replaced by a device or a pipe is refused at the limit.
        byte[] bytes;
        try { bytes = BoundedFile.ReadAll(path, MaxBytes, "the settings of an earlier run"); }
        catch (InputException e)
        {
            throw new InputException(path, "", $"{string.Join("; ", e.Problems.Select(p => p.Problem))}; start again without --resume");
        }
        JsonObject? before;
        try { before = JsonNode.Parse(bytes) as JsonObject; }
        catch (JsonException e)
        {
            throw new InputException(path, "", $"cannot read the settings of the earlier run ({e.Message}); start again without --resume");
        }
        var now = JsonNode.Parse(ToUtf8())!.AsObject();
        // Fields of either side: a field written only when set (static, latency_table) differs when one run set it and the other did not.
        var fields = now.Select(f => f.Key).Union(before?.Select(f => f.Key) ?? []).ToList();
        var differ = fields.Where(field => before is null || !JsonNode.DeepEquals(now[field], before[field])).ToList();
        if (differ.Count == 0) return;
        var contentOnly = differ is ["inputs"] && before?["inputs"] is JsonArray old
                          && old.Select(i => i?["path"]?.GetValue<string>()).SequenceEqual(Inputs.Select(i => i.Path));
        throw new InputException(resultsPath, "", contentOnly
            ? $"was made from other content: the population changed since the earlier run (see {path}); " +
              "start again without --resume, or write the new results to another file"
            : $"was made by a screening with other settings ({string.Join(", ", differ)} differ, see {path}); " +
              "resume with the same input and options, or start again without --resume");
    }
}
