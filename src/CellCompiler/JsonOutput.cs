using System.Text.Encodings.Web;
using System.Text.Json;

namespace CellCompiler;

/// <summary>Settings for every JSON this tool writes: compact, and readable non-ASCII and quotes (no \u escapes).</summary>
public static class JsonOutput
{
    public static readonly JsonWriterOptions Options = new()
    {
        Indented = false,
        Encoder = JavaScriptEncoder.UnsafeRelaxedJsonEscaping,
    };

    public static Utf8JsonWriter Writer(Stream stream) => new(stream, Options);
}
