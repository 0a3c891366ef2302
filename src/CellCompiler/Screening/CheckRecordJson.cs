using System.Text.Json;
using CellCompiler.Runtime;

namespace CellCompiler.Screening;

/// <summary>
/// One check result as one line of JSON (contract section 5 fields plus train_memory_bytes,
/// latency_ms, latency and check_ms). Figures are null for candidates that never compiled.
/// </summary>
public static class CheckRecordJson
{
    public static void Write(Utf8JsonWriter writer, CheckRecord record)
    {
        writer.WriteStartObject();
        writer.WriteString("id", record.Id);
        WriteStringOrNull(writer, "name", record.Name);
        WriteStringOrNull(writer, "hash", record.Hash);
        writer.WriteString("status", record.Status.Name());
        WriteStringOrNull(writer, "reason", record.Reason);
        WriteStringOrNull(writer, "reason_kind", record.ReasonKind);
        if (record.OutputShape is { } shape)
        {
            writer.WriteStartArray("output_shape");
            writer.WriteStringValue("N");
            foreach (var d in shape) writer.WriteNumberValue(d);
            writer.WriteEndArray();
        }
        else writer.WriteNull("output_shape");
        var f = record.Figures;
        WriteNumberOrNull(writer, "params", f?.Params);
        WriteNumberOrNull(writer, "buffers", f?.Buffers);
        WriteNumberOrNull(writer, "macs", f?.Macs);
        WriteNumberOrNull(writer, "peak_activation_bytes", f?.PeakActivationBytes);
        if (f is not null)
        {
            writer.WriteStartObject("ops");
            foreach (var (op, count) in f.OpCounts) writer.WriteNumber(op, count);
            writer.WriteEndObject();
        }
        else writer.WriteNull("ops");
        writer.WriteStartArray("warnings");
        foreach (var warning in record.Warnings) writer.WriteStringValue(warning);
        writer.WriteEndArray();
        WriteNumberOrNull(writer, "onnx_bytes", record.OnnxBytes);
        WriteNumberOrNull(writer, "train_memory_bytes", record.TrainMemoryBytes);
        if (record.Latency is { } latency)
        {
            if (latency.AtBatch(1) is { } one) writer.WriteNumber("latency_ms", Round(one.P50Ms));
            writer.WritePropertyName("latency");
            WriteLatency(writer, latency);
        }
        writer.WriteBoolean("cached", record.Cached);
        writer.WriteNumber("check_ms", Round(record.CheckMs));
        writer.WriteEndObject();
    }

    public static void WriteLatency(Utf8JsonWriter writer, LatencyReport latency)
    {
        writer.WriteStartObject();
        writer.WriteNumber("threads", latency.Threads);
        writer.WriteString("onnxruntime", latency.RuntimeVersion);
        writer.WriteString("processor", latency.Processor);
        writer.WriteStartArray("batches");
        foreach (var b in latency.Batches)
        {
            writer.WriteStartObject();
            writer.WriteNumber("batch", b.Batch);
            writer.WriteNumber("runs", b.Runs);
            writer.WriteNumber("min_ms", Round(b.MinMs));
            writer.WriteNumber("p50_ms", Round(b.P50Ms));
            writer.WriteNumber("p90_ms", Round(b.P90Ms));
            writer.WriteNumber("mean_ms", Round(b.MeanMs));
            writer.WriteNumber("std_ms", Round(b.StdMs));
            writer.WriteNumber("samples_per_second", Math.Round(b.SamplesPerSecond, 1));
            writer.WriteEndObject();
        }
        writer.WriteEndArray();
        writer.WriteEndObject();
    }

    public static string ToLine(CheckRecord record)
    {
        using var stream = new MemoryStream();
        using (var writer = JsonOutput.Writer(stream))
            Write(writer, record);
        return System.Text.Encoding.UTF8.GetString(stream.ToArray());
    }

    private static double Round(double ms) => Math.Round(ms, 4);

    private static void WriteStringOrNull(Utf8JsonWriter writer, string name, string? value)
    {
        if (value is null) writer.WriteNull(name);
        else writer.WriteString(name, value);
    }

    private static void WriteNumberOrNull(Utf8JsonWriter writer, string name, long? value)
    {
        if (value is { } v) writer.WriteNumber(name, v);
        else writer.WriteNull(name);
    }
}
