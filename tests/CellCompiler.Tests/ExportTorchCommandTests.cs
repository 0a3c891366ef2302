using System.Text.Json;
using CellCompiler.Compilation;
using CellCompiler.Graph;
using CellCompiler.Input;
using CellCompiler.Tests.Support;
using CellCompiler.TorchExport;

namespace CellCompiler.Tests;

/// <summary>
/// `cellc export-torch` through the real process: the fixtures (every kind, both merges, a cell of
/// inverted bottlenecks, dead code) against `cellc compile --json` and PyTorch, the generated text a
/// reviewer reads, determinism, and bad input.
/// </summary>
public sealed class ExportTorchCommandTests
{
    private static readonly string Vocab = RepoPaths.Fixture("tidepool-vocab.json");
    private static readonly string Bottleneck = RepoPaths.Fixture("tidepool-bottleneck.json");
    private static readonly string DeadCode = RepoPaths.Fixture("tidepool-deadcode.json");

    private static string Export(TempFolder folder, string genotype, string name, params string[] options)
    {
        var path = folder.File(name + ".py");
        var result = ProcessRunner.Cellc(["export-torch", genotype, "-o", path, .. options], null, folder.Path);
        Assert.True(result.ExitCode == 0, result.Stderr);
        Assert.Contains(path, result.Stdout);
        return path;
    }

    [Fact]
    public void Fixtures_load_compile_weights_match_runtime_logits_and_train()
    {
        (string Genotype, string[] Options)[] runs =
        [
            (Vocab, ["--skeleton", "proxy"]),
            (Vocab, ["--skeleton", "proxy", "--merge", "sum", "--opset", "13"]),
            // Odd widths (83, 166, 333 channels) make the squeeze-excitation floors uneven.
            (Bottleneck, ["--skeleton", "full", "--width-mult", "1.3"]),
            (Bottleneck, ["--skeleton", "full224", "--merge", "sum", "--cells", "1"]),
            (DeadCode, ["--skeleton", "proxy"]),
        ];
        using var folder = new TempFolder();
        var lines = new List<string>();
        var figures = new Dictionary<string, JsonElement>();
        for (var i = 0; i < runs.Length; i++)
        {
            var (genotype, options) = runs[i];
            var id = $"fixture{i}";
            var onnx = folder.File(id + ".onnx");
            var compiled = ProcessRunner.Cellc(["compile", genotype, "-o", onnx, "--json", "--seed", "4", .. options], null, folder.Path);
            Assert.True(compiled.ExitCode == 0, compiled.Stderr);
            var json = JsonDocument.Parse(compiled.Stdout).RootElement.Clone();
            // The module is written without --seed: weights of any seed load into it.
            var module = Export(folder, genotype, id, options);
            var input = json.GetProperty("input_shape").EnumerateArray().Skip(1).Select(e => e.GetInt32()).ToArray();
            lines.Add(ExportTorchBatch.Line(id, module, onnx, input, folder));
            figures[id] = json;
        }
        var results = PythonReference.RunJsonLines("torch_export_check.py", folder.Write("batch.jsonl", string.Join("\n", lines) + "\n"));
        Assert.Equal(runs.Length, results.Count);
        foreach (var result in results)
        {
            var json = figures[result.GetProperty("id").GetString()!];
            ExportTorchBatch.AssertCase(result, json.GetProperty("params").GetInt64(), json.GetProperty("buffers").GetInt64(),
                json.GetProperty("output_shape")[1].GetInt32());
        }
    }

    [Fact]
    public void A_reviewer_sees_each_primitives_layers_in_its_class()
    {
        using var folder = new TempFolder();
        var text = File.ReadAllText(Export(folder, Vocab, "vocab"));
        // wide5 = sepconv 5x5 (contract 3.1): depthwise 5x5, pointwise, BN, relu.
        Assert.Contains("class Primitive_wide5(nn.Module):", text);
        Assert.Contains("self.dw = nn.Conv2d(c, c, 5, padding=2, groups=c, bias=False)", text);
        // bneck3 = mbconv expand 6, se 0.25, silu: E = 6C, R = max(1, floor(C * 0.25)) in integer arithmetic.
        Assert.Contains("self.expand.conv = nn.Conv2d(c, 6 * c, 1, bias=False)", text);
        Assert.Contains("self.se.reduce = nn.Conv2d(6 * c, max(1, c // 4), 1, bias=True)", text);
        Assert.Contains("self.se.expand = nn.Conv2d(max(1, c // 4), 6 * c, 1, bias=True)", text);
        Assert.Contains("se_mul = dw_silu * se_sigmoid", text);
        // strip7 = factorized 7: 1x7 then 7x1.
        Assert.Contains("self.row = nn.Conv2d(c, c, (1, 7), padding=(0, 3), bias=False)", text);
        Assert.Contains("self.col = nn.Conv2d(c, c, (7, 1), padding=(3, 0), bias=False)", text);
        // dw7 = dwconv 7x7 dilation 3: pads 3 * 6 / 2 = 9.
        Assert.Contains("self.conv = nn.Conv2d(c, c, 7, padding=9, dilation=3, groups=c, bias=False)", text);
        Assert.Contains("self.pool = nn.AvgPool2d(5, stride=1, padding=2, count_include_pad=False)", text);
        // BatchNorm with ONNX's epsilon, and ONNX's momentum 0.9 as PyTorch's 0.1.
        Assert.Contains("nn.BatchNorm2d(c, eps=1e-05, momentum=0.1)", text);
        // The cell's merges: node 3 of limpet concatenates three inputs, then conv 1x1 back to C.
        Assert.Contains("self.n3.conv = nn.Conv2d(3 * c, c, 1, bias=False)", text);
        Assert.Contains("n3_cat = torch.cat([e2, e5, e3], 1)", text);
        // Stages hold their cells under the node names' paths.
        Assert.Contains("self.stage1.cell0 = Motif_cell(32)", text);
        Assert.Contains("self.head.gemm = nn.Linear(64, 10)", text);
        // Imports: torch only (and the standard library's sys).
        Assert.Equal(["import sys", "import torch", "from torch import nn"],
            text.Split('\n').Where(l => l.StartsWith("import ", StringComparison.Ordinal) || l.StartsWith("from ", StringComparison.Ordinal)));
    }

    [Fact]
    public void Dead_code_is_left_out_as_the_compiler_does()
    {
        using var folder = new TempFolder();
        var text = File.ReadAllText(Export(folder, DeadCode, "dead", "--merge", "sum"));
        // kelp: edges 0 (conv1x1) and 1 (sepconv3x3) are live; maxpool and conv3x3 hang off a node that never reaches the output.
        Assert.Contains("class Primitive_conv1x1(nn.Module):", text);
        Assert.Contains("class Primitive_sepconv3x3(nn.Module):", text);
        Assert.DoesNotContain("Primitive_maxpool3x3", text);
        Assert.DoesNotContain("Primitive_conv3x3", text);
        Assert.DoesNotContain("Primitive_dwconv3x3", text);
        // drift's output is dead (its uses lower to none) and `unused` is never used.
        Assert.DoesNotContain("Motif_drift", text);
        Assert.DoesNotContain("Motif_unused", text);
        // The cell's node 2 has only drift and none as inputs, so it is dead and node 3 has one input, e2.
        Assert.DoesNotContain("torch.cat", text);
        Assert.Contains("        return e2\n", text);
    }

    [Fact]
    public void Names_that_share_a_definition_share_one_class()
    {
        using var folder = new TempFolder();
        var genotype = folder.Write("twins.json", """
            { "format": "genotype/1", "name": "twins",
              "primitives": { "plain3": { "kind": "conv", "kernel": 3 }, "again3": { "kind": "conv", "kernel": 3, "act": "relu" },
                              "wide": { "kind": "sepconv", "kernel": 5 } },
              "levels": [ { "nodes": 4, "motifs": { "cell": { "edges":
                [[0, 1, "plain3"], [0, 2, "wide"], [1, 2, "again3"], [0, 3, "conv3x3"], [2, 3, "identity"]] } } } ] }
            """);
        var text = File.ReadAllText(Export(folder, genotype, "twins", "--merge", "sum"));
        Assert.Contains("class Primitive_conv3x3(nn.Module):\n    \"\"\"conv3x3, plain3, again3: conv 3x3, relu.", text);
        Assert.Contains("class Primitive_wide(nn.Module):", text);
        Assert.DoesNotContain("Primitive_plain3", text);
        Assert.DoesNotContain("Primitive_again3", text);
        // Sum merges are plain sums, inputs in order of their source node.
        Assert.Contains("        n2 = e1 + e2\n", text);
        Assert.Contains("        n3 = e3 + n2\n", text);
        Assert.Contains("        self.e0 = Primitive_conv3x3(c)\n", text);
        Assert.Contains("        self.e2 = Primitive_conv3x3(c)\n", text);
    }

    [Fact]
    public void The_same_inputs_give_the_same_bytes()
    {
        using var folder = new TempFolder();
        var first = File.ReadAllBytes(Export(folder, Vocab, "first", "--skeleton", "full", "--merge", "sum"));
        var second = File.ReadAllBytes(Export(folder, Vocab, "second", "--skeleton", "full", "--merge", "sum"));
        Assert.Equal(first, second);
        var genotype = GenotypeReader.ReadFile(Vocab);
        var library = TorchExporter.Export(genotype, Compiler.Compile(genotype, SkeletonPresets.All["full"] with { Merge = MergeMode.Sum })).Bytes;
        Assert.Equal(first, library);
        Assert.DoesNotContain((byte)'\r', first);
    }

    [Fact]
    public void Default_output_is_an_importable_module_name_in_the_current_folder()
    {
        using var folder = new TempFolder();
        var result = ProcessRunner.Cellc(["export-torch", Vocab], null, folder.Path);
        Assert.True(result.ExitCode == 0, result.Stderr);
        Assert.True(File.Exists(folder.File("tidepool_vocab.py")));
        Assert.Single(Directory.GetFiles(folder.Path));
    }

    [Fact]
    public void Bad_declaration_exits_2_naming_file_and_json_path_and_writes_nothing()
    {
        using var folder = new TempFolder();
        var genotype = folder.Write("bad.json", """
            { "format": "genotype/1", "primitives": { "even4": { "kind": "sepconv", "kernel": 4 } },
              "levels": [ { "nodes": 2, "motifs": { "cell": { "edges": [[0, 1, "even4"]] } } } ] }
            """);
        var output = folder.File("bad.py");
        var result = ProcessRunner.Cellc(["export-torch", genotype, "-o", output], null, folder.Path);
        Assert.Equal(2, result.ExitCode);
        Assert.Contains(genotype, result.Stderr);
        Assert.Contains("primitives.even4.kernel", result.Stderr);
        Assert.DoesNotContain("   at ", result.Stderr);
        Assert.Equal([genotype], Directory.GetFiles(folder.Path));
    }

    [Fact]
    public void Dead_cell_exits_1_and_writes_nothing()
    {
        using var folder = new TempFolder();
        var result = ProcessRunner.Cellc(["export-torch", RepoPaths.Fixture("tidepool-deadcell.json"), "-o", folder.File("dead.py")], null, folder.Path);
        Assert.Equal(1, result.ExitCode);
        Assert.Contains("dead", result.Stderr);
        Assert.Empty(Directory.GetFiles(folder.Path));
    }

    [Fact]
    public void Bad_options_and_outputs_exit_2_without_a_trace()
    {
        using var folder = new TempFolder();
        var copy = folder.File("vocab.json");
        File.Copy(Vocab, copy);
        var before = File.ReadAllBytes(copy);
        (string[] Args, string Expected)[] cases =
        [
            (["export-torch", copy, "-o", folder.File("missing/net.py")], "does not exist"),
            (["export-torch", copy, "-o", copy], "is the genotype file"),
            (["export-torch", copy, "-o", folder.File("n.py"), "--channels", "16,x"], "--channels"),
            (["export-torch", copy, "-o", folder.File("n.py"), "--opset", "9"], "--opset"),
            (["export-torch", folder.File("absent.json"), "-o", folder.File("n.py")], "absent.json"),
        ];
        foreach (var (args, expected) in cases)
        {
            var result = ProcessRunner.Cellc(args, null, folder.Path);
            Assert.True(result.ExitCode == 2, $"{string.Join(' ', args)}: exit {result.ExitCode}\n{result.Stderr}");
            Assert.Contains(expected, result.Stderr);
            Assert.DoesNotContain("   at ", result.Stderr);
        }
        Assert.Equal(before, File.ReadAllBytes(copy));
        Assert.Equal([copy], Directory.GetFiles(folder.Path));
    }

    [Fact]
    public void Names_with_quotes_and_backslashes_stay_data_in_the_python_file()
    {
        using var folder = new TempFolder();
        var genotype = folder.Write("odd.json", """
            { "format": "genotype/1", "name": "tide \"pool\" \\ \u00e9t\u00e9 '''",
              "meta": { "why": "a \"quoted\" note" },
              "levels": [ { "nodes": 2, "motifs": { "cell": { "edges": [[0, 1, "conv3x3"]] } } } ] }
            """);
        var module = Export(folder, genotype, "odd");
        // Run the file as Python (its main block does not run under runpy) and read its constants back.
        var result = ProcessRunner.Run(PythonReference.Python,
            ["-c", "import json, runpy, sys; g = runpy.run_path(sys.argv[1]); print(json.dumps([g['GENOTYPE_NAME'], json.loads(g['GENOTYPE'])]))", module]);
        Assert.True(result.ExitCode == 0, result.Stderr);
        using var answer = JsonDocument.Parse(result.Stdout);
        Assert.Equal("tide \"pool\" \\ \u00e9t\u00e9 '''", answer.RootElement[0].GetString());
        Assert.Equal("tide \"pool\" \\ \u00e9t\u00e9 '''", answer.RootElement[1].GetProperty("name").GetString());
    }

    [Fact]
    public void The_readme_example_runs_as_written()
    {
        var readme = File.ReadAllText(Path.Combine(RepoPaths.Root, "README.md"));
        var section = readme[readme.IndexOf("### `cellc export-torch`", StringComparison.Ordinal)..];
        string Block(string language)
        {
            var start = section.IndexOf($"```{language}\n", StringComparison.Ordinal) + language.Length + 4;
            return section[start..section.IndexOf("```", start, StringComparison.Ordinal)];
        }
        using var folder = new TempFolder();
        foreach (var line in Block("sh").Split('\n', StringSplitOptions.RemoveEmptyEntries))
        {
            var words = line.Split(' ', StringSplitOptions.RemoveEmptyEntries);
            Assert.Equal("cellc", words[0]);
            var args = words.Skip(1).Select(w => w.StartsWith("fixtures/", StringComparison.Ordinal) ? Path.Combine(RepoPaths.Root, w) : w);
            var result = ProcessRunner.Cellc(args, null, folder.Path);
            Assert.True(result.ExitCode == 0, $"{line}\n{result.Stderr}");
        }
        var script = folder.Write("readme_example.py", Block("python") + "assert tuple(logits.shape) == (8, vocab.CLASSES)\nprint('ok')\n");
        var run = ProcessRunner.Run(PythonReference.Python, [script], workingDirectory: folder.Path);
        Assert.True(run.ExitCode == 0, run.Stderr);
        Assert.Equal("ok", run.Stdout.Trim());
    }

    [Fact]
    public void Module_paths_follow_node_names_both_ways()
    {
        // The rule the generated loader applies (module_path in the file) and the README states.
        Assert.Equal("stage1.cell0.e2.e0.e1.conv", NodePath.ModulePath("stage1/cell0/e2:reef/e0:anemone/e1:dwconv3x3/conv"));
        Assert.Equal("stage0.cell1.n3.conv", NodePath.ModulePath("stage0/cell1/n3:concat/conv"));
        Assert.Equal("stage0.cell0.e0.se.reduce", NodePath.ModulePath("stage0/cell0/e0:bneck3/se/reduce"));
        Assert.Equal("reduce0.pw", NodePath.ModulePath("reduce0/pw"));
        // Every weight of a compiled model lands on a distinct module path (the loader relies on it).
        var genotype = GenotypeReader.ReadFile(Vocab);
        var model = Compiler.Compile(genotype, SkeletonPresets.All["proxy"]);
        var withWeights = model.Network.Network.Ops.Where(op => op is ConvOp or BatchNormOp or GemmOp).Select(op => op.Name).ToList();
        Assert.Equal(withWeights.Count, withWeights.Select(NodePath.ModulePath).Distinct().Count());
    }
}
