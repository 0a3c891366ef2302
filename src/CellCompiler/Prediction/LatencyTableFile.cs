using System.Globalization;
using System.Text.Json;
using System.Text.Json.Serialization;
using CellCompiler.Input;
using CellCompiler.Io;

namespace CellCompiler.Prediction;

/// <summary>
/// The one reader and writer of latency tables (`latency-table/1`, JSON, System.Text.Json source
/// generation). Reading is strict: an unknown field, a missing one, a unit key of no known kind, a
/// time that is not a finite number of at least 0, a unit listed twice, or a file cut short is bad
/// input naming the file and the JSON path. Writing goes through <see cref="AtomicFile"/>; changes
/// are made under a lock file beside the table and merged into what the file holds then, so parallel
/// processes sharing a table lose none of each other's entries.
/// </summary>
public static class LatencyTableFile
{
    public const string FormatTag = "latency-table/1";

    /// <summary>A table of a few thousand units is well under a megabyte.</summary>
    public const long MaxBytes = 64L << 20;

    /// <summary>How long a writer waits for another process's lock (held only to read, merge and write).</summary>
    private static readonly TimeSpan LockTimeout = TimeSpan.FromSeconds(60);

    public static LatencyTable Read(string path) => Parse(BoundedFile.ReadAll(path, MaxBytes, "a latency table"), path);

    public static LatencyTable Parse(byte[] utf8, string origin)
    {
        if (utf8.AsSpan().Trim(" \t\r\n"u8).IsEmpty)
            throw Bad(origin, "", "the file is empty; make a table with cellc calibrate");
        RequireWholeJson(utf8, origin);
        TableDocument? document;
        try
        {
            document = JsonSerializer.Deserialize(utf8, PredictionJson.Default.TableDocument);
        }
        catch (JsonException e)
        {
            var at = e.Path is { Length: > 1 } p ? p.TrimStart('$', '.') : "";
            throw Bad(origin, at, $"not a latency table: {Describe(e)}");
        }
        if (document is null) throw Bad(origin, "", "not a latency table: the file holds null");
        return FromDocument(document, origin);
    }

    /// <summary>Writes <paramref name="table"/> over <paramref name="path"/> at once (no merge): for a new table.</summary>
    public static void Write(string path, LatencyTable table) =>
        AtomicFile.Write(path, [.. JsonSerializer.SerializeToUtf8Bytes(ToDocument(table), PredictionJson.Default.TableDocument), (byte)'\n']);

    /// <summary>
    /// Changes the table at <paramref name="path"/> under its lock: reads what the file holds now (null
    /// when there is no file yet), applies <paramref name="change"/>, writes the result atomically and
    /// returns it.
    /// </summary>
    public static LatencyTable Update(string path, Func<LatencyTable?, LatencyTable> change)
    {
        using var held = Lock(path);
        var current = File.Exists(path) ? Read(path) : null;
        var updated = change(current);
        Write(path, updated);
        return updated;
    }

    /// <summary>The lock file beside the table, held open exclusively (an advisory file lock between processes).</summary>
    private static FileStream Lock(string path)
    {
        var lockPath = Path.Combine(Path.GetDirectoryName(Path.GetFullPath(path))!, "." + Path.GetFileName(path) + ".lock");
        var deadline = DateTime.UtcNow + LockTimeout;
        while (true)
        {
            try
            {
                return new FileStream(lockPath, FileMode.OpenOrCreate, FileAccess.ReadWrite, FileShare.None, 1, FileOptions.None);
            }
            catch (IOException) when (File.Exists(lockPath) && DateTime.UtcNow < deadline)
            {
                Thread.Sleep(20); // another process is merging its entries; it holds the lock for one read and one write
            }
            catch (Exception e) when (e is IOException or UnauthorizedAccessException)
            {
                throw new OutputException($"{path}: cannot lock the latency table for writing ({lockPath}): {e.Message}", e);
            }
        }
    }

    private static LatencyTable FromDocument(TableDocument document, string origin)
    {
        if (document.Format != FormatTag)
            throw Bad(origin, "format", $"must be \"{FormatTag}\", found \"{document.Format}\"");
        var c = document.Conditions;
        if (c.Processor.Length == 0) throw Bad(origin, "conditions.processor", "is empty");
        if (c.Onnxruntime.Length == 0) throw Bad(origin, "conditions.onnxruntime", "is empty");
        if (c.Session.Length == 0) throw Bad(origin, "conditions.session", "is empty");
        if (c.Threads is < 1 or > 256) throw Bad(origin, "conditions.threads", $"must be 1 to 256, found {c.Threads}");
        if (c.Batch != 1) throw Bad(origin, "conditions.batch", $"must be 1 (tables hold batch-1 times), found {c.Batch}");
        var units = new List<KeyValuePair<string, UnitTime>>(document.Units.Count);
        var seen = new HashSet<string>(StringComparer.Ordinal);
        for (var i = 0; i < document.Units.Count; i++)
        {
            var u = document.Units[i];
            var path = string.Create(CultureInfo.InvariantCulture, $"units[{i}]");
            // Element nullability is not enforced by the serializer: a hand-edited `null` is bad input.
            if (u is null)
                throw Bad(origin, path, "must be an object with unit, ms, how, measured and load, found null");
            var kind = u.Unit.Split(' ', 2)[0];
            if (!LatencyUnit.KindWords.Contains(kind))
                throw Bad(origin, path + ".unit", $"'{u.Unit}' is not a unit (it must start with one of {string.Join(", ", LatencyUnit.KindWords)})");
            if (!double.IsFinite(u.Ms) || u.Ms < 0)
                throw Bad(origin, path + ".ms", $"must be a finite time of at least 0 ms, found {u.Ms.ToString(CultureInfo.InvariantCulture)}");
            if (kind == "anchor" && u.Ms <= 0)
                throw Bad(origin, path + ".ms", "the anchor's time must be above 0 ms: every unit is scaled by it; make the table again with cellc calibrate");
            if (!seen.Add(u.Unit))
                throw Bad(origin, path + ".unit", $"'{u.Unit}' is listed twice");
            units.Add(new(u.Unit, new UnitTime(u.Ms, u.How, u.Measured, u.Load)));
        }
        return new LatencyTable(new TableConditions(c.Processor, c.Onnxruntime, c.Threads, c.Session, c.Opset), units, FitOf(document.Fit, origin));
    }

    private static NetworkFit? FitOf(FitDocument? fit, string origin)
    {
        if (fit is null) return null;
        if (!double.IsFinite(fit.InterceptMs))
            throw Bad(origin, "fit.intercept_ms", "must be a finite number of ms");
        if (!double.IsFinite(fit.Slope) || fit.Slope <= 0)
            throw Bad(origin, "fit.slope", $"must be a finite number above 0, found {fit.Slope.ToString(CultureInfo.InvariantCulture)}");
        if (fit.Networks < NetworkFit.MinNetworks)
            throw Bad(origin, "fit.networks", $"must be at least {NetworkFit.MinNetworks}, found {fit.Networks}");
        if (!double.IsFinite(fit.MeanAbsoluteErrorPercent) || fit.MeanAbsoluteErrorPercent < 0)
            throw Bad(origin, "fit.mean_absolute_error_percent", "must be a finite number of at least 0");
        return new NetworkFit(fit.InterceptMs, fit.Slope, fit.Networks, fit.MeanAbsoluteErrorPercent, fit.How, fit.Measured, fit.Load, fit.Skeleton);
    }

    private static TableDocument ToDocument(LatencyTable table)
    {
        var c = table.Conditions;
        return new TableDocument(FormatTag,
            new ConditionsDocument(c.Processor, c.OnnxRuntime, c.Threads, c.Session, c.Opset, 1),
            table.Units.Select(kv => new UnitDocument(kv.Key, kv.Value.Ms, kv.Value.How, kv.Value.Measured, kv.Value.Load)).ToList(),
            table.Fit is { } f ? new FitDocument(f.InterceptMs, f.Slope, f.Networks, f.MeanAbsoluteErrorPercent, f.How, f.Measured, f.Load, f.Skeleton) : null);
    }

    /// <summary>Syntax first, so that a file cut short is told apart from a wrong field.</summary>
    private static void RequireWholeJson(byte[] utf8, string origin)
    {
        if (Scan(utf8, isFinalBlock: true) is not { } error) return;
        // Read as a block that more bytes could follow: no error then means the text was merely cut off.
        if (Scan(utf8, isFinalBlock: false) is null)
            throw Bad(origin, "", "the JSON ends early: the file is cut short (truncated); delete it and make it again with cellc calibrate");
        throw Bad(origin, "", $"not valid JSON at line {error.LineNumber + 1}, byte {error.BytePositionInLine + 1}: the file is damaged; delete it and make it again with cellc calibrate");
    }

    private static JsonException? Scan(byte[] utf8, bool isFinalBlock)
    {
        var reader = new Utf8JsonReader(utf8, isFinalBlock, state: default);
        try
        {
            while (reader.Read()) { }
            return null;
        }
        catch (JsonException e)
        {
            return e;
        }
    }

    private static string Describe(JsonException e)
    {
        var message = e.Message;
        var cut = message.IndexOf(" Path: $", StringComparison.Ordinal);
        if (cut >= 0) message = message[..cut];
        if (message.Contains("could not be mapped", StringComparison.Ordinal)) return "an unknown field (tables are read strictly)";
        if (message.Contains("missing required properties", StringComparison.Ordinal)) return "a required field is missing";
        if (message.Contains("could not be converted", StringComparison.Ordinal)) return "a field holds a value of the wrong type";
        if (message.Contains("null", StringComparison.OrdinalIgnoreCase)) return "a field that needs a value is null";
        return message;
    }

    private static InputException Bad(string origin, string jsonPath, string problem) => new(origin, jsonPath, problem);
}

internal sealed record TableDocument(string Format, ConditionsDocument Conditions, IReadOnlyList<UnitDocument> Units,
    [property: JsonIgnore(Condition = JsonIgnoreCondition.WhenWritingNull)] FitDocument? Fit = null);

internal sealed record FitDocument(double InterceptMs, double Slope, int Networks, double MeanAbsoluteErrorPercent, string How,
    DateTimeOffset Measured, double? Load, string Skeleton);

internal sealed record ConditionsDocument(string Processor, string Onnxruntime, int Threads, string Session, int Opset, int Batch);

internal sealed record UnitDocument(string Unit, double Ms, string How, DateTimeOffset Measured, double? Load);

/// <summary>Source-generated JSON for latency tables: snake_case, strict (unknown fields, missing fields and nulls refused).</summary>
[JsonSourceGenerationOptions(
    PropertyNamingPolicy = JsonKnownNamingPolicy.SnakeCaseLower,
    WriteIndented = true,
    RespectNullableAnnotations = true,
    RespectRequiredConstructorParameters = true,
    UnmappedMemberHandling = JsonUnmappedMemberHandling.Disallow,
    AllowDuplicateProperties = false,
    NumberHandling = JsonNumberHandling.Strict)]
[JsonSerializable(typeof(TableDocument))]
internal sealed partial class PredictionJson : JsonSerializerContext;
