using System.Text;
using System.Text.Json;
using CellCompiler.Vocabulary;

namespace CellCompiler.Input;

/// <summary>
/// Writes a <see cref="Genotype"/> as compact genotype/1 JSON (contract section 1), the inverse of
/// <see cref="GenotypeReader.Parse(ReadOnlyMemory{byte}, string, string)"/>: reading the output back
/// gives the same levels, motifs, edges (in order), name and id.
/// </summary>
public static class GenotypeJson
{
    /// <summary>
    /// Writes one genotype object. The id (<paramref name="id"/>, else the genotype's own) comes
    /// first when there is one; `name` is written only when it differs from the id, because the
    /// reader takes the id as the name when a document has no name.
    /// </summary>
    public static void Write(Utf8JsonWriter writer, Genotype genotype, string? id = null)
    {
        id ??= genotype.Id;
        writer.WriteStartObject();
        if (id is not null) writer.WriteString("id", id);
        writer.WriteString("format", GenotypeReader.FormatTag);
        if (genotype.Name != id) writer.WriteString("name", genotype.Name);
        if (genotype.Declarations is { Declared.Count: > 0 } declarations)
        {
            writer.WriteStartObject("primitives");
            foreach (var (name, definition) in declarations.Declared)
                WriteDeclaration(writer, name, definition);
            writer.WriteEndObject();
        }
        if (genotype.Meta is { } meta)
        {
            writer.WritePropertyName("meta");
            writer.WriteRawValue(meta, skipInputValidation: true);
        }
        writer.WriteStartArray("levels");
        foreach (var level in genotype.Levels)
        {
            writer.WriteStartObject();
            writer.WriteNumber("nodes", level.Nodes);
            writer.WriteStartObject("motifs");
            foreach (var motif in level.Motifs)
            {
                writer.WriteStartObject(motif.Name);
                writer.WriteStartArray("edges");
                foreach (var edge in motif.Edges)
                {
                    writer.WriteStartArray();
                    writer.WriteNumberValue(edge.From);
                    writer.WriteNumberValue(edge.To);
                    writer.WriteStringValue(edge.Op);
                    writer.WriteEndArray();
                }
                writer.WriteEndArray();
                writer.WriteEndObject();
            }
            writer.WriteEndObject();
            writer.WriteEndObject();
        }
        writer.WriteEndArray();
        writer.WriteEndObject();
    }

    /// <summary>One declaration with its kind and the parameters that differ from their defaults (the kernel always).</summary>
    public static void WriteDeclaration(Utf8JsonWriter writer, string name, PrimitiveDefinition definition)
    {
        writer.WriteStartObject(name);
        writer.WriteString("kind", definition.Kind.Name);
        foreach (var (parameter, value) in definition.Values())
        {
            if (definition.IsDefault(parameter)) continue;
            var field = PrimitiveDefinition.ParameterName(parameter);
            switch (parameter)
            {
                case PrimitiveParameter.Act: writer.WriteString(field, value); break;
                case PrimitiveParameter.Se: writer.WriteNumber(field, definition.Se); break;
                default: writer.WriteNumber(field, int.Parse(value, System.Globalization.CultureInfo.InvariantCulture)); break;
            }
        }
        writer.WriteEndObject();
    }

    /// <summary>The genotype as one compact JSON document (no trailing newline).</summary>
    public static string Serialize(Genotype genotype, string? id = null)
    {
        using var stream = new MemoryStream();
        using (var writer = JsonOutput.Writer(stream))
            Write(writer, genotype, id);
        return Encoding.UTF8.GetString(stream.GetBuffer(), 0, (int)stream.Length);
    }
}
