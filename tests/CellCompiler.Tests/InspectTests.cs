using System.Text.Json;
using CellCompiler.Compilation;
using CellCompiler.Input;
using CellCompiler.Inspection;
using CellCompiler.OnnxFormat;
using CellCompiler.Tests.Support;
using Google.Protobuf;
using static CellCompiler.Tests.InspectGraphs;

namespace CellCompiler.Tests;

/// <summary>
/// A small CNN with BatchNorm exported by PyTorch (Debian's python3-torch, torch.onnx.export) through
/// tests/reference/export_inspect_model.py, with PyTorch's own counts of it. Exported once per test class.
/// </summary>
public sealed class InspectTorchExport : IDisposable
{
    private readonly TempFolder _folder = new();

    /// <summary>Dynamic batch only: every other dimension is known.</summary>
    public string Path { get; }

    /// <summary>Dynamic batch, height and width: the Conv output sizes are symbolic.</summary>
    public string DynamicHwPath { get; }

    /// <summary>PyTorch's side: params (sum of p.numel()), buffers (BN running stats), macs (forward hooks).</summary>
    public JsonElement Facts { get; }

    public InspectTorchExport()
    {
        Assert.True(File.Exists(PythonReference.Python), $"{PythonReference.Python} is missing; scripts/test.sh installs python3-torch");
        var result = ProcessRunner.Run(PythonReference.Python, [RepoPaths.ReferenceScript("export_inspect_model.py"), _folder.Path],
            timeout: TimeSpan.FromMinutes(5));
        Assert.True(result.ExitCode == 0,
            $"export_inspect_model.py failed with exit code {result.ExitCode} (3 means python3-torch is not installed):\n{result.Stderr}");
        Facts = JsonDocument.Parse(result.Stdout.Trim().Split('\n')[^1]).RootElement.Clone();
        Path = Facts.GetProperty("path").GetString()!;
        DynamicHwPath = Facts.GetProperty("dynamic_hw_path").GetString()!;
        Assert.True(File.Exists(Path) && File.Exists(DynamicHwPath), "export_inspect_model.py did not write both models");
    }

    public void Dispose() => _folder.Dispose();
}

/// <summary>
/// `cellc inspect` (issue 5): the library on a PyTorch export and on our own models, a hand-built
/// graph with hand-derived figures, and the command through the real process.
/// </summary>
public sealed class InspectTests(InspectTorchExport torch) : IClassFixture<InspectTorchExport>
{
    private static List<string> Dims(IReadOnlyList<Dim>? dims) => dims!.Select(d => d.ToString()).ToList();

    private static List<string> JsonShape(JsonElement shape) => shape.EnumerateArray().Select(d => d.ToString()).ToList();

    // ---- a model PyTorch exported -------------------------------------------------------------

    [Fact]
    public void Params_buffers_and_macs_of_a_pytorch_export_equal_pytorchs_counts()
    {
        var inspection = ModelInspector.InspectFile(torch.Path);

        // PyTorch: sum(p.numel() for p in model.parameters()) (export_inspect_model.py).
        Assert.Equal(torch.Facts.GetProperty("params").GetInt64(), inspection.Params);
        // PyTorch: numel of every BatchNorm2d running_mean and running_var.
        Assert.Equal(torch.Facts.GetProperty("buffers").GetInt64(), inspection.Buffers);
        // PyTorch: forward hooks on Conv2d and Linear, with the output sizes PyTorch computed.
        Assert.Equal(torch.Facts.GetProperty("macs").GetInt64(), inspection.Macs);
        Assert.Equal(inspection.Macs, inspection.MacsKnown);
        Assert.Empty(inspection.MacsNotComputed);
        Assert.Equal(inspection.Params + inspection.Buffers, inspection.InitializerElements);

        // The export kept BatchNormalization as nodes of its own (TrainingMode.PRESERVE, see the script).
        Assert.Equal(2, inspection.OpCounts["BatchNormalization"]);
        Assert.Equal(2, inspection.OpCounts["Conv"]);
        Assert.Equal(1, inspection.OpCounts["Gemm"]);
        Assert.Equal("pytorch", inspection.ProducerName);
        Assert.Equal([new OpsetImport("", 13)], inspection.OpsetImports);
        Assert.Equal(["B", "3", "21", "21"], Dims(inspection.Inputs.Single().Dims));
        Assert.Equal(["B", "5"], Dims(inspection.Outputs.Single().Dims));
    }

    [Fact]
    public void The_pytorch_export_states_no_intermediate_shapes_so_inspect_propagates_them()
    {
        // torch.onnx.export (1.13) writes no value_info: the MACs above came from our own propagation.
        var proto = ModelProto.Parser.ParseFrom(File.ReadAllBytes(torch.Path));
        Assert.Empty(proto.Graph.ValueInfo);
        var inspection = ModelInspector.InspectFile(torch.Path);
        var produced = proto.Graph.Node.SelectMany(n => n.Output).Distinct().Count();
        Assert.Equal(new ShapeCoverage(Declared: 1, Inferred: produced - 1, Unknown: 0), inspection.Shapes);
    }

    [Fact]
    public void With_symbolic_height_and_width_the_conv_macs_are_reported_as_not_computable()
    {
        var inspection = ModelInspector.InspectFile(torch.DynamicHwPath);
        Assert.Null(inspection.Macs);
        // Only the Linear(16, 5) is computable: 16 * 5 (section 4, Gemm: in * out).
        Assert.Equal(16 * 5, inspection.MacsKnown);
        Assert.Equal([("/0/Conv", "Conv"), ("/4/Conv", "Conv")], inspection.MacsNotComputed.Select(n => (n.Node, n.OpType)).ToList());
        Assert.All(inspection.MacsNotComputed, n => Assert.Contains("spatial size is not known", n.Reason, StringComparison.Ordinal));
        // Both trace back to the graph input, whose height and width the model leaves symbolic.
        Assert.All(inspection.MacsNotComputed, n => Assert.Equal(new ShapeGap("x", "graph input", "the model states its shape as [B, 3, H, W]"), n.ShapeLostAt));
        // Params do not depend on shapes: still PyTorch's count.
        Assert.Equal(torch.Facts.GetProperty("params").GetInt64(), inspection.Params);
        Assert.Equal(["B", "3", "H", "W"], Dims(inspection.Inputs.Single().Dims));
    }

    // ---- our own models -----------------------------------------------------------------------

    public static TheoryData<string, string> OwnModels()
    {
        var data = new TheoryData<string, string>();
        foreach (var fixture in new[] { "tidepool-h3.json", "tidepool-flat11.json", "tidepool-deadcode.json" })
            foreach (var skeleton in new[] { "proxy", "full", "tidepool-skeleton.json" })
                data.Add(fixture, skeleton);
        return data;
    }

    private static CompiledModel CompileOwn(string fixture, string skeleton) =>
        Compiler.Compile(
            GenotypeReader.ReadFile(RepoPaths.Fixture(fixture)),
            SkeletonPresets.All.TryGetValue(skeleton, out var preset) ? preset : SkeletonReader.Resolve(RepoPaths.Fixture(skeleton)));

    private static void AssertFiguresEqualCompile(CompiledModel model, ModelInspection inspection)
    {
        // Every figure equals what `compile` reports for the same model (contract section 4).
        Assert.Equal(model.Figures.Params, inspection.Params);
        Assert.Equal(model.Figures.Buffers, inspection.Buffers);
        Assert.Equal(model.Figures.Macs, inspection.Macs);
        Assert.Empty(inspection.MacsNotComputed);
        Assert.Equal(model.Figures.OpCounts.OrderBy(kv => kv.Key, StringComparer.Ordinal).ToList(),
            inspection.OpCounts.OrderBy(kv => kv.Key, StringComparer.Ordinal).ToList());
        Assert.Equal(["N", .. model.OutputShape.Dims.Select(d => d.ToString())], Dims(inspection.Outputs.Single().Dims));
        Assert.Equal(["N", .. model.InputShape.Dims.Select(d => d.ToString())], Dims(inspection.Inputs.Single().Dims));
        Assert.Equal(model.Hash, inspection.Metadata["genotype_hash"]);
        Assert.Equal(model.Skeleton.ToJson(), inspection.Metadata["skeleton"]);
        Assert.Equal(model.Name, inspection.Metadata["genotype_name"]);
        Assert.Equal("0", inspection.Metadata["seed"]);
        Assert.Equal(0, inspection.ConstantElements);
        Assert.Empty(inspection.OpsOutsideMacRules);
    }

    [Theory]
    [MemberData(nameof(OwnModels))]
    public void On_our_own_models_every_figure_equals_compiles(string fixture, string skeleton)
    {
        var model = CompileOwn(fixture, skeleton);
        var inspection = ModelInspector.Inspect(model.OnnxBytes);
        AssertFiguresEqualCompile(model, inspection);
        Assert.Equal("cellc", inspection.ProducerName);
        Assert.Equal([new OpsetImport("", model.Options.Opset)], inspection.OpsetImports);
        Assert.Equal(model.OnnxBytes.LongLength, inspection.ModelBytes);
        // Contract section 3: every intermediate tensor has a value_info with its full shape.
        Assert.Equal(0, inspection.Shapes.Inferred);
        Assert.Equal(0, inspection.Shapes.Unknown);
    }

    [Theory]
    [MemberData(nameof(OwnModels))]
    public void Without_value_info_our_models_still_get_compiles_figures_by_propagation(string fixture, string skeleton)
    {
        var model = CompileOwn(fixture, skeleton);
        var proto = ModelProto.Parser.ParseFrom(model.OnnxBytes);
        var intermediate = proto.Graph.ValueInfo.Count;
        proto.Graph.ValueInfo.Clear();
        var inspection = ModelInspector.Inspect(proto.ToByteArray());
        AssertFiguresEqualCompile(model, inspection);
        // Only the graph output states its shape now; the rest is propagated, and agrees with compile's shape inference.
        Assert.Equal(new ShapeCoverage(Declared: 1, Inferred: intermediate, Unknown: 0), inspection.Shapes);
    }

    // ---- a hand-built graph: rules derived by hand ----------------------------------------------

    /// <summary>
    /// images [N, 4, 7, 7] -> Conv W[6, 4, 3, 3] stride 2 auto_pad SAME_UPPER -> [N, 6, 4, 4]
    /// -> Reshape to [Shape(c)[0], 6, -1] (the PyTorch `x.view(x.size(0), 6, -1)` chain: Shape, Gather,
    /// Unsqueeze, Concat) -> [N, 6, 16] -> MatMul W[16, 10] -> [N, 6, 10]
    /// -> MatMul with its own transpose [N, 10, 6] (two activations) -> [N, 6, 6] -> Flatten -> logits [N, 36].
    /// No value_info: every shape comes from propagation. One initializer keeps its data externally.
    /// </summary>
    private static ModelProto HandBuilt()
    {
        var graph = new GraphProto { Name = "hand" };
        graph.Input.Add(Value("images", "N", 4, 7, 7));
        graph.Output.Add(new ValueInfoProto { Name = "logits" });
        graph.Initializer.Add(Weight("conv.w", 6, 4, 3, 3));
        var external = new TensorProto { Name = "mm.w", DataType = 1, DataLocation = 1 };
        external.Dims.AddRange([16, 10]);
        external.ExternalData.Add(new StringStringEntryProto { Key = "location", Value = "weights.bin" });
        graph.Initializer.Add(external);
        graph.Initializer.Add(Int64s("rest", [2], 6, -1));
        graph.Initializer.Add(Int64s("zero", [], 0));
        graph.Initializer.Add(Int64s("axes", [1], 0));
        graph.Node.Add(Node("conv", "Conv", ["images", "conv.w"], "c", Ints("strides", 2, 2), Text("auto_pad", "SAME_UPPER")));
        graph.Node.Add(Node("shape", "Shape", ["c"], "s"));
        graph.Node.Add(Node("batch", "Gather", ["s", "zero"], "b"));
        graph.Node.Add(Node("unsqueeze", "Unsqueeze", ["b", "axes"], "b1"));
        graph.Node.Add(Node("target", "Concat", ["b1", "rest"], "t", Int("axis", 0)));
        graph.Node.Add(Node("reshape", "Reshape", ["c", "t"], "r"));
        graph.Node.Add(Node("mm", "MatMul", ["r", "mm.w"], "m"));
        graph.Node.Add(Node("tr", "Transpose", ["m"], "mt", Ints("perm", 0, 2, 1)));
        graph.Node.Add(Node("gram", "MatMul", ["m", "mt"], "g"));
        graph.Node.Add(Node("flat", "Flatten", ["g"], "logits"));
        var model = new ModelProto { IrVersion = 8, ProducerName = "hand", Graph = graph };
        model.OpsetImport.Add(new OperatorSetIdProto { Domain = "", Version = 17 });
        model.MetadataProps.Add(new StringStringEntryProto { Key = "k", Value = "v" });
        return model;
    }

    [Fact]
    public void A_hand_built_graph_gets_hand_derived_shapes_and_macs()
    {
        var inspection = ModelInspector.Inspect(HandBuilt().ToByteArray());
        // Conv SAME_UPPER: out = ceil(7 / 2) = 4; MACs = Cout * Hout * Wout * Cin * kH * kW = 6 * 4 * 4 * 4 * 3 * 3.
        const long conv = 6 * 4 * 4 * 4 * 3 * 3;
        // Contract section 4 counts Conv and Gemm only: the two MatMuls are outside the rules, listed, not in the total.
        Assert.Equal(conv, inspection.MacsKnown);
        Assert.Equal(conv, inspection.Macs);
        Assert.Empty(inspection.MacsNotComputed);
        Assert.Contains(inspection.Notes, n => n.Contains("MatMul (2)", StringComparison.Ordinal) && n.Contains("only Conv and Gemm", StringComparison.Ordinal));
        // [N, 6, 10] x [N, 10, 6] -> [N, 6, 6]; Flatten -> [N, 36]: the undeclared output is shown as propagated.
        Assert.Equal(["N", "36"], Dims(inspection.Outputs.Single().Dims));
        Assert.Equal(new ShapeCoverage(0, 10, 0), inspection.Shapes);

        // Initializers: the int64 ones (2 + 1 + 1 elements) are constants, not params; the external one is counted from its dims.
        Assert.Equal(6 * 4 * 3 * 3 + 16 * 10, inspection.Params);
        Assert.Equal(4, inspection.ConstantElements);
        Assert.Equal(6 * 4 * 3 * 3 + 16 * 10 + 4, inspection.InitializerElements);
        Assert.Equal(1, inspection.ExternalDataInitializers);
        Assert.Contains(inspection.Notes, n => n.Contains("external files", StringComparison.Ordinal));
        Assert.Equal("v", inspection.Metadata["k"]);
    }

    [Fact]
    public void A_hand_built_channel_shuffle_gets_hand_derived_shapes_and_macs()
    {
        var model = ChannelShuffle();
        var propagation = ShapePropagation.Run(model.Graph);
        string Shape(string tensor) => "[" + string.Join(", ", propagation.Table[tensor]!) + "]";
        // Hand derivations, step by step (see InspectGraphs.ChannelShuffle): Pad grows H and W by 1 + 1.
        Assert.Equal("[N, 8, 8, 8]", Shape("p"));
        // The folded target [Shape[0], 2, Shape[1] / 2, 8, 8] keeps the batch symbolic.
        Assert.Equal("[N, 2, 4, 8, 8]", Shape("target") is var _ ? "[" + string.Join(", ", propagation.Table.Values("target")!.Elements) + "]" : "");
        Assert.Equal("[N, 2, 4, 8, 8]", Shape("r"));
        Assert.Equal("[N, 4, 2, 8, 8]", Shape("t"));
        // -1 = (4 * 2 * 8 * 8) / (8 * 8); N cancels against N.
        Assert.Equal("[N, 8, 8, 8]", Shape("u"));
        // Slice end = (8 + 1) / 2 * 1 = 4 (integer division truncates).
        Assert.Equal("[N, 4, 8, 8]", Shape("a"));
        Assert.Equal("[N, 4, 8, 8]", Shape("b0"));
        Assert.Equal("[N, 4, 8, 8]", Shape("b1"));
        Assert.Equal("[N, 8, 8, 8]", Shape("m"));
        // Conv 3x3, stride 2, pads 1: floor((8 + 2 - 3) / 2) + 1 = 4.
        Assert.Equal("[N, 16, 4, 4]", Shape("c2out"));
        Assert.Equal("[N, 10]", Shape("logits"));

        var inspection = ModelInspector.Inspect(model.ToByteArray());
        Assert.Equal(ChannelShuffleMacs, inspection.Macs);
        Assert.Equal(0, inspection.Shapes.Unknown);
        Assert.Empty(inspection.UnknownShapeSources);
    }

    [Fact]
    public void Attribute_forms_of_older_opsets_get_hand_derived_shapes_and_macs()
    {
        // Before opset 11 Pad takes pads, before 10 Slice takes starts/ends/axes, before 13 Split, Squeeze,
        // Unsqueeze and the reductions take their sizes and axes as attributes.
        var g = new GraphProto { Name = "older" };
        g.Input.Add(Value("images", "N", 4, 5, 5));
        g.Output.Add(new ValueInfoProto { Name = "logits" });
        g.Initializer.Add(Weight("conv.w", 2, 3, 3, 3));
        g.Initializer.Add(Weight("fc.w", 3, 2));
        g.Node.Add(Node("pad", "Pad", ["images"], "p", Ints("pads", 0, 0, 2, 1, 0, 0, 0, 1)));        // [N, 4, 5+2+0, 5+1+1]
        g.Node.Add(Node("slice", "Slice", ["p"], "s", Ints("starts", 1), Ints("ends", 1_000_000), Ints("axes", 2)));  // H 7 -> 6
        g.Node.Add(Node("split", "Split", ["s"], ["s0", "s1"], Int("axis", 1), Ints("split", 1, 3)));
        g.Node.Add(Node("conv", "Conv", ["s1", "conv.w"], "c"));                                   // [N, 2, 6-2, 7-2]
        g.Node.Add(Node("mean", "ReduceMean", ["c"], "r", Ints("axes", 2, 3), Int("keepdims", 0))); // [N, 2]
        g.Node.Add(Node("unsq", "Unsqueeze", ["r"], "r3", Ints("axes", 2)));                        // [N, 2, 1]
        g.Node.Add(Node("sq", "Squeeze", ["r3"], "r2", Ints("axes", -1)));                          // [N, 2]
        g.Node.Add(Node("fc", "Gemm", ["r2", "fc.w"], "logits", Int("transB", 1)));                 // [N, 3]
        var propagation = ShapePropagation.Run(Model(g, 9).Graph);
        string Shape(string tensor) => string.Join(", ", propagation.Table[tensor]!);
        Assert.Equal("N, 4, 7, 7", Shape("p"));
        Assert.Equal("N, 4, 6, 7", Shape("s"));
        Assert.Equal("N, 1, 6, 7", Shape("s0"));
        Assert.Equal("N, 3, 6, 7", Shape("s1"));
        Assert.Equal("N, 2, 4, 5", Shape("c"));
        Assert.Equal("N, 2", Shape("r"));
        Assert.Equal("N, 2, 1", Shape("r3"));
        Assert.Equal("N, 3", Shape("logits"));
        // Conv: Cout * Hout * Wout * Cin * kH * kW = 2 * 4 * 5 * 3 * 3 * 3; Gemm: 2 * 3.
        Assert.Equal(2 * 4 * 5 * 3 * 3 * 3 + 2 * 3, ModelInspector.Inspect(Model(g, 9).ToByteArray()).Macs);
    }

    [Fact]
    public void Where_a_shape_is_lost_inspect_names_the_node_and_why()
    {
        // A Reshape whose target comes from an op cellc has no rule for: the Conv after it cannot be counted,
        // and the report traces the missing shape back to that op.
        var g = new GraphProto { Name = "lost" };
        g.Input.Add(Value("images", "N", 4, 6, 6));
        g.Output.Add(new ValueInfoProto { Name = "y" });
        g.Initializer.Add(Weight("conv.w", 8, 4, 3, 3));
        g.Node.Add(Node("oracle", "ShapeOracle", ["images"], "target"));
        g.Node.Add(Node("reshape", "Reshape", ["images", "target"], "r"));
        g.Node.Add(Node("conv", "Conv", ["r", "conv.w"], "y"));
        var inspection = ModelInspector.Inspect(Model(g, 17).ToByteArray());
        Assert.Null(inspection.Macs);
        var conv = Assert.Single(inspection.MacsNotComputed);
        Assert.Equal("conv", conv.Node);
        Assert.Equal(new ShapeGap("oracle", "ShapeOracle", "cellc has no shape rule for ShapeOracle"), conv.ShapeLostAt);
        Assert.Equal([new UnknownShapes(new ShapeGap("oracle", "ShapeOracle", "cellc has no shape rule for ShapeOracle"), 3)],
            inspection.UnknownShapeSources);

        // The same Reshape with a target folded from a NonZero count: lost at the data-dependent op, with its reason.
        g.Node[0] = Node("nonzero", "NonZero", ["images"], "target");
        var second = ModelInspector.Inspect(Model(g, 17).ToByteArray());
        Assert.Equal("nonzero", second.MacsNotComputed.Single().ShapeLostAt!.Node);
        Assert.Contains("depends on the data", second.MacsNotComputed.Single().ShapeLostAt!.Reason, StringComparison.Ordinal);

        var text = new StringWriter();
        CellCompiler.Cli.Commands.InspectCommand.WriteText(text, second, "lost.onnx");
        Assert.Contains("MACs          not computed: 1 of 1 Conv and Gemm nodes lack shapes (the rest make 0 per sample)", text.ToString(), StringComparison.Ordinal);
        Assert.Contains("shape lost at nonzero (NonZero): the size of what NonZero returns depends on the data", text.ToString(), StringComparison.Ordinal);
    }

    [Fact]
    public void Text_output_escapes_control_characters_from_every_name_in_the_model()
    {
        var model = HandBuilt();
        var hostile = "\u001b]0;owned\u0007\u001b[2J\u202Egnp.exe";
        model.ProducerName = hostile;
        model.Graph.Name = hostile;
        model.Graph.Input[0].Name = hostile;
        model.Graph.Node[0].Input[0] = hostile;
        model.Graph.Input[0].Type.TensorType.Shape.Dim[0].DimParam = hostile;
        model.Graph.Node[0].Name = hostile;
        model.Graph.Node.Add(Node(hostile, "Op\u001b[31m", [], "z"));
        model.OpsetImport.Add(new OperatorSetIdProto { Domain = hostile, Version = 1 });
        model.MetadataProps.Add(new StringStringEntryProto { Key = hostile, Value = hostile + "\r\n" + hostile });
        var inspection = ModelInspector.Inspect(model.ToByteArray(), hostile);

        var text = new StringWriter();
        CellCompiler.Cli.Commands.InspectCommand.WriteText(text, inspection, hostile);
        var output = text.ToString();
        // TerminalText.Safe: no control character but the line ends, no bidirectional override.
        Assert.DoesNotContain(output, c => (char.IsControl(c) && c != '\n') || c is '\u202E');
        Assert.Contains(@"\e]0;owned\u0007\e[2J\u202Egnp.exe", output, StringComparison.Ordinal);
        Assert.Contains(@"Op\e[31m", output, StringComparison.Ordinal);
    }

    [Fact]
    public void Long_metadata_values_wrap_under_their_column_and_are_cut_in_text_but_whole_in_json()
    {
        var model = HandBuilt();
        // A genotype as canonical JSON (the kind of value our models will carry), 5,000+ characters, no spaces.
        var genotype = "{\"format\":\"genotype/1\",\"levels\":[" + string.Join(",", Enumerable.Range(0, 120).Select(i => $"[{i},{i + 1},\"sepconv3x3\"]")) + "]}";
        model.MetadataProps.Add(new StringStringEntryProto { Key = "genotype", Value = genotype });
        model.MetadataProps.Add(new StringStringEntryProto { Key = "cellc_version", Value = "0.9.0+abc1234" });
        model.MetadataProps.Add(new StringStringEntryProto { Key = "a_key_far_longer_than_the_key_column_allows", Value = "short" });
        var inspection = ModelInspector.Inspect(model.ToByteArray());

        var text = new StringWriter();
        CellCompiler.Cli.Commands.InspectCommand.WriteText(text, inspection, "m.onnx");
        var lines = text.ToString().Split('\n');
        Assert.All(lines, line => Assert.True(line.Length <= 100, $"line of {line.Length} chars: {line}"));
        var start = Array.FindIndex(lines, l => l.Contains("genotype ", StringComparison.Ordinal));
        var column = lines[start].IndexOf("{\"format\"", StringComparison.Ordinal);
        // Four lines at most, the continuation under the value's column, the last one saying how long the value is.
        Assert.Equal(new string(' ', column), lines[start + 1][..column]);
        Assert.Equal(new string(' ', column), lines[start + 3][..column]);
        Assert.EndsWith($"... ({genotype.Length:N0} chars; see --json)", lines[start + 3], StringComparison.Ordinal);
        Assert.Contains("cellc_version", lines[start + 4], StringComparison.Ordinal);
        Assert.EndsWith("0.9.0+abc1234", lines[start + 4], StringComparison.Ordinal);
        // A key longer than the column gets its own line, the value below it.
        var longKey = Array.FindIndex(lines, l => l.EndsWith("a_key_far_longer_than_the_key_column_allows", StringComparison.Ordinal));
        Assert.Equal("short", lines[longKey + 1].Trim());

        using var json = new MemoryStream();
        InspectionJson.Write(json, inspection, null);
        var parsed = JsonDocument.Parse(json.ToArray()).RootElement.GetProperty("metadata_props");
        Assert.Equal(genotype, parsed.GetProperty("genotype").GetString());
    }

    [Fact]
    public void Garbage_bytes_are_an_input_error_naming_the_source()
    {
        var e = Assert.Throws<InputException>(() => ModelInspector.Inspect("not a model at all"u8.ToArray(), "junk.onnx"));
        Assert.StartsWith("junk.onnx: not an ONNX model", e.Message, StringComparison.Ordinal);
        // A valid protobuf that is no ONNX model (no graph, no opset) is refused too.
        var empty = new ModelProto { ProducerName = "x" }.ToByteArray();
        Assert.Throws<InputException>(() => ModelInspector.Inspect(empty, "empty.onnx"));
    }

    // ---- through the CLI process --------------------------------------------------------------

    [Fact]
    public void Cli_inspect_json_of_a_compiled_model_parses_and_matches_compile_json()
    {
        using var folder = new TempFolder();
        var onnx = folder.File("h3.onnx");
        var compile = ProcessRunner.Cellc("compile", RepoPaths.Fixture("tidepool-h3.json"), "-o", onnx, "--json");
        Assert.True(compile.ExitCode == 0, compile.Stderr);
        var compiled = JsonDocument.Parse(compile.Stdout).RootElement;

        var result = ProcessRunner.Cellc("inspect", onnx, "--json");
        Assert.True(result.ExitCode == 0, result.Stderr);
        var json = JsonDocument.Parse(result.Stdout).RootElement;
        foreach (var figure in new[] { "params", "buffers", "macs" })
            Assert.Equal(compiled.GetProperty(figure).GetInt64(), json.GetProperty(figure).GetInt64());
        Assert.Equal(compiled.GetProperty("ops").ToString(), json.GetProperty("ops").ToString());
        Assert.Equal(JsonShape(compiled.GetProperty("output_shape")), JsonShape(json.GetProperty("outputs")[0].GetProperty("shape")));
        Assert.Equal(compiled.GetProperty("hash").GetString(), json.GetProperty("metadata_props").GetProperty("genotype_hash").GetString());
        Assert.Equal(compiled.GetProperty("onnx_bytes").GetInt64(), json.GetProperty("onnx_bytes").GetInt64());
        Assert.Equal(17, json.GetProperty("opset_import").GetProperty("ai.onnx").GetInt32());
        Assert.Equal(JsonValueKind.Array, json.GetProperty("macs_not_computed").ValueKind);
        Assert.Empty(json.GetProperty("macs_not_computed").EnumerateArray());
    }

    [Fact]
    public void Cli_inspect_of_a_pytorch_export_without_value_info_gives_pytorchs_figures()
    {
        var json = JsonDocument.Parse(Ok(ProcessRunner.Cellc("inspect", torch.Path, "--json")).Stdout).RootElement;
        Assert.Equal(torch.Facts.GetProperty("params").GetInt64(), json.GetProperty("params").GetInt64());
        Assert.Equal(torch.Facts.GetProperty("macs").GetInt64(), json.GetProperty("macs").GetInt64());
        Assert.Equal(0, json.GetProperty("shapes").GetProperty("unknown").GetInt32());

        var dynamic = JsonDocument.Parse(Ok(ProcessRunner.Cellc("inspect", torch.DynamicHwPath, "--json")).Stdout).RootElement;
        Assert.Equal(JsonValueKind.Null, dynamic.GetProperty("macs").ValueKind);
        Assert.Equal(16 * 5, dynamic.GetProperty("macs_known").GetInt64());
        Assert.Equal(["/0/Conv", "/4/Conv"],
            dynamic.GetProperty("macs_not_computed").EnumerateArray().Select(n => n.GetProperty("node").GetString()).ToList());
        Assert.Equal(["B", "3", "H", "W"], JsonShape(dynamic.GetProperty("inputs")[0].GetProperty("shape")));

        // The readable summary says so in words.
        var text = Ok(ProcessRunner.Cellc("inspect", torch.DynamicHwPath)).Stdout;
        Assert.Contains("not computed: 2 of 3 Conv and Gemm nodes lack shapes (the rest make 80 per sample)", text, StringComparison.Ordinal);
        Assert.Contains("shape lost at x (graph input): the model states its shape as [B, 3, H, W]", text, StringComparison.Ordinal);
        Assert.Contains("/0/Conv", text, StringComparison.Ordinal);
    }

    private static ProcessResult Ok(ProcessResult result)
    {
        Assert.True(result.ExitCode == 0, $"cellc inspect failed with exit code {result.ExitCode}:\n{result.Stderr}");
        return result;
    }

    [Theory]
    [InlineData("garbage")]
    [InlineData("genotype")]
    [InlineData("missing")]
    public void Cli_inspect_of_a_file_that_is_no_model_exits_2_naming_it_without_a_stack_trace(string kind)
    {
        using var folder = new TempFolder();
        var path = kind switch
        {
            "garbage" => WriteGarbage(folder.File("garbage.onnx")),
            "genotype" => RepoPaths.Fixture("tidepool-h3.json"),
            _ => folder.File("missing.onnx"),
        };
        var result = ProcessRunner.Cellc("inspect", path);
        Assert.Equal(2, result.ExitCode);
        Assert.Contains(path, result.Stderr, StringComparison.Ordinal);
        Assert.DoesNotContain("   at ", result.Stderr, StringComparison.Ordinal);
        Assert.DoesNotContain("internal error", result.Stderr, StringComparison.Ordinal);
        Assert.Equal("", result.Stdout);
    }

    private static string WriteGarbage(string path)
    {
        var bytes = new byte[4096];
        new Random(5).NextBytes(bytes);
        File.WriteAllBytes(path, bytes);
        return path;
    }
}
