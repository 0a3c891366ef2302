using System.Text.Json;

namespace CellCompiler.Input;

public sealed record InputSpec(int Channels, int Height, int Width);

public sealed record StemSpec(string Op, int Stride, bool Pool);

public sealed record StageSpec(int Cells, int Channels);

public enum MergeMode { Concat, Sum }

/// <summary>The macro network a cell is stacked into (contract section 2), fully resolved.</summary>
public sealed record Skeleton(
    InputSpec Input,
    int Classes,
    StemSpec Stem,
    IReadOnlyList<StageSpec> Stages,
    string Reduction,
    MergeMode Merge)
{
    public const string FormatTag = "skeleton/1";

    public static string MergeName(MergeMode merge) => merge == MergeMode.Concat ? "concat" : "sum";

    /// <summary>The resolved skeleton as a skeleton/1 document, in a fixed field order (used in metadata and --json).</summary>
    public string ToJson()
    {
        using var stream = new MemoryStream();
        using (var writer = JsonOutput.Writer(stream))
            WriteJson(writer);
        return System.Text.Encoding.UTF8.GetString(stream.ToArray());
    }

    public void WriteJson(Utf8JsonWriter writer)
    {
        writer.WriteStartObject();
        writer.WriteString("format", FormatTag);
        writer.WriteStartObject("input");
        writer.WriteNumber("channels", Input.Channels);
        writer.WriteNumber("height", Input.Height);
        writer.WriteNumber("width", Input.Width);
        writer.WriteEndObject();
        writer.WriteNumber("classes", Classes);
        writer.WriteStartObject("stem");
        writer.WriteString("op", Stem.Op);
        writer.WriteNumber("stride", Stem.Stride);
        writer.WriteBoolean("pool", Stem.Pool);
        writer.WriteEndObject();
        writer.WriteStartArray("stages");
        foreach (var stage in Stages)
        {
            writer.WriteStartObject();
            writer.WriteNumber("cells", stage.Cells);
            writer.WriteNumber("channels", stage.Channels);
            writer.WriteEndObject();
        }
        writer.WriteEndArray();
        writer.WriteString("reduction", Reduction);
        writer.WriteString("merge", MergeName(Merge));
        writer.WriteEndObject();
    }

    public override string ToString() => ToJson();
}
