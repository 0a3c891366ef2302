using System.Text.Json;

namespace CellCompiler.Inspection;

/// <summary>Writes a <see cref="ModelInspection"/> as one JSON object (the output of `cellc inspect --json`).</summary>
public static class InspectionJson
{
    public static void Write(Stream stream, ModelInspection model, string? path)
    {
        using var writer = JsonOutput.Writer(stream);
        Write(writer, model, path);
        writer.Flush();
        stream.WriteByte((byte)'\n');
    }

    public static void Write(Utf8JsonWriter writer, ModelInspection model, string? path)
    {
        writer.WriteStartObject();
        if (path is not null) writer.WriteString("path", path);
        writer.WriteNumber("onnx_bytes", model.ModelBytes);
        writer.WriteNumber("ir_version", model.IrVersion);
        writer.WriteString("producer_name", model.ProducerName);
        writer.WriteString("producer_version", model.ProducerVersion);
        writer.WriteString("domain", model.Domain);
        writer.WriteNumber("model_version", model.ModelVersion);
        writer.WriteString("graph_name", model.GraphName);
        writer.WriteStartObject("opset_import");
        foreach (var opset in model.OpsetImports)
            writer.WriteNumber(opset.DisplayDomain, opset.Version);
        writer.WriteEndObject();

        WriteTensors(writer, "inputs", model.Inputs);
        WriteTensors(writer, "outputs", model.Outputs);

        writer.WriteNumber("nodes", model.NodeCount);
        WriteCounts(writer, "ops", model.OpCounts);
        writer.WriteNumber("subgraph_nodes", model.SubgraphNodes);

        writer.WriteNumber("initializers", model.InitializerCount);
        writer.WriteNumber("initializer_elements", model.InitializerElements);
        writer.WriteNumber("params", model.Params);
        writer.WriteNumber("buffers", model.Buffers);
        writer.WriteNumber("constant_elements", model.ConstantElements);
        writer.WriteNumber("external_data_initializers", model.ExternalDataInitializers);

        if (model.Macs is { } macs) writer.WriteNumber("macs", macs);
        else writer.WriteNull("macs");
        writer.WriteNumber("macs_known", model.MacsKnown);
        writer.WriteStartArray("macs_not_computed");
        foreach (var node in model.MacsNotComputed)
        {
            writer.WriteStartObject();
            writer.WriteString("node", node.Node);
            writer.WriteString("op_type", node.OpType);
            writer.WriteString("reason", node.Reason);
            if (node.ShapeLostAt is { } gap)
            {
                writer.WritePropertyName("shape_lost_at");
                WriteGap(writer, gap);
            }
            else writer.WriteNull("shape_lost_at");
            writer.WriteEndObject();
        }
        writer.WriteEndArray();
        WriteCounts(writer, "ops_outside_mac_rules", model.OpsOutsideMacRules);

        writer.WriteStartObject("shapes");
        writer.WriteNumber("declared", model.Shapes.Declared);
        writer.WriteNumber("inferred", model.Shapes.Inferred);
        writer.WriteNumber("unknown", model.Shapes.Unknown);
        writer.WriteStartArray("lost_at");
        foreach (var source in model.UnknownShapeSources)
        {
            writer.WriteStartObject();
            WriteGapFields(writer, source.Gap);
            writer.WriteNumber("tensors", source.Tensors);
            writer.WriteEndObject();
        }
        writer.WriteEndArray();
        writer.WriteEndObject();

        writer.WriteStartObject("metadata_props");
        foreach (var (key, value) in model.Metadata)
            writer.WriteString(key, value);
        writer.WriteEndObject();

        writer.WriteStartArray("notes");
        foreach (var note in model.Notes)
            writer.WriteStringValue(note);
        writer.WriteEndArray();
        writer.WriteEndObject();
    }

    private static void WriteGap(Utf8JsonWriter writer, ShapeGap gap)
    {
        writer.WriteStartObject();
        WriteGapFields(writer, gap);
        writer.WriteEndObject();
    }

    private static void WriteGapFields(Utf8JsonWriter writer, ShapeGap gap)
    {
        writer.WriteString("node", gap.Node);
        writer.WriteString("op_type", gap.OpType);
        writer.WriteString("reason", gap.Reason);
    }

    private static void WriteCounts(Utf8JsonWriter writer, string name, IReadOnlyDictionary<string, int> counts)
    {
        writer.WriteStartObject(name);
        foreach (var (key, count) in counts)
            writer.WriteNumber(key, count);
        writer.WriteEndObject();
    }

    /// <summary>Shapes as arrays of numbers (dim_value), strings (dim_param) and null (unknown); null for an unknown rank.</summary>
    private static void WriteTensors(Utf8JsonWriter writer, string name, IReadOnlyList<TensorInfo> tensors)
    {
        writer.WriteStartArray(name);
        foreach (var tensor in tensors)
        {
            writer.WriteStartObject();
            writer.WriteString("name", tensor.Name);
            writer.WriteString("elem_type", tensor.ElemType);
            if (tensor.Dims is null)
            {
                writer.WriteNull("shape");
            }
            else
            {
                writer.WriteStartArray("shape");
                foreach (var d in tensor.Dims)
                {
                    if (d.Value is { } v) writer.WriteNumberValue(v);
                    else if (!string.IsNullOrEmpty(d.Param)) writer.WriteStringValue(d.Param);
                    else writer.WriteNullValue();
                }
                writer.WriteEndArray();
            }
            writer.WriteEndObject();
        }
        writer.WriteEndArray();
    }
}
