using System.Text.Json;
using CellCompiler.Hashing;
using CellCompiler.Input;
using CellCompiler.Tests.Support;
using CellCompiler.Vocabulary;

namespace CellCompiler.Tests;

/// <summary>
/// Declared primitives (contract section 3.1): the table of kinds, validation of declarations with
/// their JSON paths, the hash rule (a primitive is its definition, never its name), warnings, and
/// the vocabulary of `cellc sample`.
/// </summary>
public sealed class DeclaredPrimitiveTests
{
    private static string Genotype(string primitives, string edges) =>
        "{\"format\": \"genotype/1\", \"name\": \"rockpool\", \"primitives\": " + primitives +
        ", \"levels\": [{\"nodes\": 4, \"motifs\": {\"cell\": {\"edges\": [" + edges + "]}}}]}";

    private static Genotype Parse(string json) => GenotypeReader.Parse(json, "test.json", "test");

    [Fact]
    public void The_kind_table_holds_exactly_the_contracts_kinds()
    {
        // Contract 3.1 lists these seven kinds; the table finds them by their classes.
        Assert.Equal(["avgpool", "conv", "dwconv", "factorized", "maxpool", "mbconv", "sepconv"], PrimitiveKinds.All.Select(k => k.Name));
        Assert.Equal(1, PrimitiveKinds.Find("conv")!.MinKernel);
        Assert.All(PrimitiveKinds.All.Where(k => k.Name != "conv"), k => Assert.Equal(3, k.MinKernel));
        Assert.False(PrimitiveKinds.Find("maxpool")!.Takes(PrimitiveParameter.Act));
        Assert.True(PrimitiveKinds.Find("mbconv")!.Takes(PrimitiveParameter.Se));
        Assert.False(PrimitiveKinds.Find("factorized")!.Takes(PrimitiveParameter.Dilation));
    }

    [Fact]
    public void The_built_ins_are_the_declarations_the_contract_names()
    {
        var spelled = Parse(Genotype("""
            {"a": {"kind": "conv", "kernel": 1}, "b": {"kind": "conv", "kernel": 3}, "c": {"kind": "dwconv", "kernel": 3},
             "d": {"kind": "sepconv", "kernel": 3}, "e": {"kind": "maxpool", "kernel": 3}, "f": {"kind": "avgpool", "kernel": 3}}
            """, """[0, 1, "a"], [0, 2, "b"], [0, 3, "c"], [1, 3, "d"], [2, 3, "e"], [1, 2, "f"]"""));
        foreach (var (name, builtin) in new[] { ("a", "conv1x1"), ("b", "conv3x3"), ("c", "dwconv3x3"), ("d", "sepconv3x3"), ("e", "maxpool3x3"), ("f", "avgpool3x3") })
            Assert.Equal(BuiltinPrimitives.Find(builtin), spelled.Primitives.Get(name));
    }

    public static TheoryData<string, string, string> BadDeclarations => new()
    {
        { """{"wide5": {"kind": "sepconv", "kernel": 4}}""", "primitives.wide5.kernel", "odd" },
        { """{"wide5": {"kind": "sepconv", "kernel": 9}}""", "primitives.wide5.kernel", "between 3 and 7" },
        { """{"wide5": {"kind": "sepconv", "kernel": 1}}""", "primitives.wide5.kernel", "between 3 and 7" },
        { """{"wide5": {"kind": "sepconv"}}""", "primitives.wide5", "'kernel'" },
        { """{"wide5": {"kernel": 5}}""", "primitives.wide5", "'kind'" },
        { """{"wide5": {"kind": "deform", "kernel": 5}}""", "primitives.wide5.kind", "unknown kind 'deform'" },
        { """{"wide5": {"kind": "factorized", "kernel": 5, "dilation": 2}}""", "primitives.wide5.dilation", "takes no 'dilation'" },
        { """{"wide5": {"kind": "maxpool", "kernel": 5, "act": "relu"}}""", "primitives.wide5.act", "takes no 'act'" },
        { """{"wide5": {"kind": "conv", "kernel": 5, "repeat": 2}}""", "primitives.wide5.repeat", "takes no 'repeat'" },
        { """{"wide5": {"kind": "sepconv", "kernel": 5, "repeat": 3}}""", "primitives.wide5.repeat", "between 1 and 2" },
        { """{"wide5": {"kind": "sepconv", "kernel": 5, "dilation": 5}}""", "primitives.wide5.dilation", "between 1 and 4" },
        { """{"wide5": {"kind": "mbconv", "kernel": 5, "expand": 9}}""", "primitives.wide5.expand", "between 1 and 8" },
        { """{"wide5": {"kind": "mbconv", "kernel": 5, "expand": 2.5}}""", "primitives.wide5.expand", "integer" },
        { """{"wide5": {"kind": "mbconv", "kernel": 5, "se": 1.5}}""", "primitives.wide5.se", "between 0 and 1" },
        { """{"wide5": {"kind": "mbconv", "kernel": 5, "se": "half"}}""", "primitives.wide5.se", "expected a number" },
        { """{"wide5": {"kind": "conv", "kernel": 5, "act": "gelu"}}""", "primitives.wide5.act", "unknown activation 'gelu'" },
        { """{"wide5": {"kind": "conv", "kernel": 5, "colour": "red"}}""", "primitives.wide5.colour", "unknown field" },
        { """{"Wide5": {"kind": "conv", "kernel": 5}}""", "primitives.Wide5", "invalid primitive name" },
        { """{"conv3x3": {"kind": "conv", "kernel": 3}}""", "primitives.conv3x3", "built-in" },
        { """{"identity": {"kind": "conv", "kernel": 3}}""", "primitives.identity", "built-in" },
        { """[1, 2]""", "primitives", "expected an object" },
    };

    [Theory]
    [MemberData(nameof(BadDeclarations))]
    public void A_bad_declaration_exits_2_naming_its_json_path(string primitives, string path, string words)
    {
        using var folder = new TempFolder();
        var file = folder.Write("rockpool.json", Genotype(primitives, """[0, 1, "conv1x1"], [1, 3, "identity"]"""));
        var result = ProcessRunner.Cellc("compile", file, "-o", folder.File("out.onnx"));
        Assert.Equal(2, result.ExitCode);
        Assert.Contains($"{file}: {path}: ", result.Stderr);
        Assert.Contains(words, result.Stderr);
        Assert.DoesNotContain("   at ", result.Stderr);
        Assert.False(File.Exists(folder.File("out.onnx")));
    }

    [Fact]
    public void A_declared_name_that_is_also_a_motif_name_is_refused()
    {
        var json = """
            {"format": "genotype/1", "primitives": {"kelp": {"kind": "conv", "kernel": 3}},
             "levels": [{"nodes": 2, "motifs": {"kelp": {"edges": [[0, 1, "conv1x1"]]}}},
                        {"nodes": 2, "motifs": {"cell": {"edges": [[0, 1, "kelp"]]}}}]}
            """;
        var error = Assert.Throws<InputException>(() => Parse(json));
        Assert.Equal("primitives.kelp", error.JsonPath);
        Assert.Contains("name of a motif", error.Problem);
    }

    [Fact]
    public void Every_mistake_of_a_file_is_reported_with_its_path()
    {
        // Two typos in different places, and a bad parameter: all three are named.
        var json = Genotype("""{"wide5": {"kind": "sepconv", "kernel": 6}}""",
            """[0, 1, "conv1x1"], [1, 2, "cnv3x3"], [2, 3, "sepconv3x33"]""");
        var error = Assert.Throws<InputException>(() => Parse(json));
        Assert.Equal(["primitives.wide5.kernel", "levels[0].motifs.cell.edges[1]", "levels[0].motifs.cell.edges[2]"],
            error.Problems.Select(p => p.JsonPath));
        Assert.Contains("'cnv3x3'", error.Problems[1].Problem);
        Assert.Contains("'sepconv3x33'", error.Problems[2].Problem);
    }

    [Fact]
    public void At_most_twenty_problems_are_reported()
    {
        var edges = string.Join(", ", Enumerable.Range(0, 30).Select(i => $"[0, {i + 1}, \"typo{i}\"]"));
        var json = "{\"format\": \"genotype/1\", \"levels\": [{\"nodes\": 32, \"motifs\": {\"cell\": {\"edges\": [" + edges + "]}}}]}";
        var error = Assert.Throws<InputException>(() => Parse(json));
        Assert.Equal(InputException.MaxProblems, error.Problems.Count);
        Assert.Equal("levels[0].motifs.cell.edges[19]", error.Problems[^1].JsonPath);
    }

    [Fact]
    public void A_non_string_id_is_an_error_not_a_string()
    {
        var error = Assert.Throws<InputException>(() => Parse("""{"format": "genotype/1", "id": 17, "levels": [{"nodes": 2, "motifs": {"cell": {"edges": [[0, 1, "conv1x1"]]}}}]}"""));
        Assert.Equal("id", error.JsonPath);
        Assert.Contains("must be a string", error.Problem);
    }

    [Fact]
    public void A_definition_hashes_the_same_whatever_its_name_or_spelling()
    {
        const string edges = """[0, 1, "wide5"], [1, 3, "conv1x1"], [0, 2, "maxpool3x3"], [2, 3, "identity"]""";
        var reference = GenotypeHasher.Hash(Parse(Genotype("""{"wide5": {"kind": "sepconv", "kernel": 5}}""", edges)));

        // Renamed.
        Assert.Equal(reference, GenotypeHasher.Hash(Parse(Genotype("""{"broad": {"kind": "sepconv", "kernel": 5}}""", edges.Replace("wide5", "broad")))));
        // Defaults spelled out.
        Assert.Equal(reference, GenotypeHasher.Hash(Parse(Genotype(
            """{"wide5": {"kind": "sepconv", "kernel": 5, "dilation": 1, "repeat": 1, "act": "relu"}}""", edges))));
        // An unused declaration beside it.
        Assert.Equal(reference, GenotypeHasher.Hash(Parse(Genotype(
            """{"wide5": {"kind": "sepconv", "kernel": 5}, "spare": {"kind": "mbconv", "kernel": 3, "se": 0.25}}""", edges))));
        // A built-in spelled as its declaration.
        Assert.Equal(reference, GenotypeHasher.Hash(Parse(Genotype(
            """{"wide5": {"kind": "sepconv", "kernel": 5}, "one": {"kind": "conv", "kernel": 1}, "mp": {"kind": "maxpool", "kernel": 3}}""",
            edges.Replace("conv1x1", "one").Replace("maxpool3x3", "mp")))));

        // Other definitions are other networks.
        foreach (var other in new[]
                 {
                     """{"wide5": {"kind": "sepconv", "kernel": 7}}""", """{"wide5": {"kind": "sepconv", "kernel": 5, "dilation": 2}}""",
                     """{"wide5": {"kind": "sepconv", "kernel": 5, "act": "silu"}}""", """{"wide5": {"kind": "dwconv", "kernel": 5}}""",
                     """{"wide5": {"kind": "mbconv", "kernel": 5}}""", """{"wide5": {"kind": "mbconv", "kernel": 5, "se": 0.25}}""",
                 })
            Assert.NotEqual(reference, GenotypeHasher.Hash(Parse(Genotype(other, edges))));
    }

    [Fact]
    public void A_trailing_zero_in_se_is_the_same_definition()
    {
        const string edges = """[0, 1, "b"], [1, 3, "identity"]""";
        var a = Parse(Genotype("""{"b": {"kind": "mbconv", "kernel": 3, "se": 0.25}}""", edges));
        var b = Parse(Genotype("""{"b": {"kind": "mbconv", "kernel": 3, "se": 0.2500}}""", edges));
        Assert.Equal(a.Primitives.Get("b"), b.Primitives.Get("b"));
        Assert.Equal(a.Primitives.Get("b").Key, b.Primitives.Get("b").Key);
        Assert.Equal(GenotypeHasher.Hash(a), GenotypeHasher.Hash(b));
    }

    [Fact]
    public void Compile_warns_about_an_unused_declaration_an_unconnected_node_and_a_cell_with_nothing_to_train()
    {
        using var folder = new TempFolder();
        var file = folder.Write("rockpool.json", Genotype(
            """{"pool5": {"kind": "maxpool", "kernel": 5}, "spare": {"kind": "conv", "kernel": 5}}""",
            """[0, 1, "pool5"], [1, 3, "avgpool3x3"], [0, 3, "identity"]"""));
        var result = ProcessRunner.Cellc("compile", file, "--no-write", "--json");
        Assert.Equal(0, result.ExitCode);
        var warnings = JsonDocument.Parse(result.Stdout).RootElement.GetProperty("warnings").EnumerateArray().Select(w => w.GetString()!).ToList();
        Assert.Contains(warnings, w => w.StartsWith("primitives.spare:", StringComparison.Ordinal) && w.Contains("never used"));
        Assert.Contains(warnings, w => w.StartsWith("levels[0].motifs.cell:", StringComparison.Ordinal) && w.Contains("node 2 has no edges"));
        Assert.Contains(warnings, w => w.StartsWith("trivial-cell:", StringComparison.Ordinal));
    }

    [Fact]
    public void A_cell_with_one_trainable_op_is_not_trivial()
    {
        var genotype = Parse(Genotype("""{"pool5": {"kind": "maxpool", "kernel": 5}}""", """[0, 1, "pool5"], [1, 3, "dwconv3x3"], [0, 3, "identity"]"""));
        Assert.DoesNotContain(Lowering.Lowerer.Warnings(genotype, Lowering.Liveness.Analyse(genotype)), w => w.StartsWith("trivial-cell", StringComparison.Ordinal));
    }

    [Fact]
    public void Hardswish_is_one_node_from_opset_14_and_hardsigmoid_times_x_at_opset_13()
    {
        // ONNX added HardSwish in opset 14 (its operator table); before, x * HardSigmoid(x; 1/6, 0.5) is the same function.
        var genotype = Parse(Genotype("""{"h": {"kind": "conv", "kernel": 3, "act": "hardswish"}}""", """[0, 1, "h"], [1, 3, "identity"]"""));
        var skeleton = SkeletonPresets.All["proxy"];
        var at13 = Compilation.Compiler.Compile(genotype, skeleton, new Compilation.CompileOptions(Opset: 13)).Figures.OpCounts;
        var at14 = Compilation.Compiler.Compile(genotype, skeleton, new Compilation.CompileOptions(Opset: 14)).Figures.OpCounts;
        Assert.Equal(3, at13["HardSigmoid"]);
        Assert.Equal(3, at13["Mul"]);
        Assert.False(at13.ContainsKey("HardSwish"));
        Assert.Equal(3, at14["HardSwish"]);
        Assert.False(at14.ContainsKey("Mul"));
    }

    [Fact]
    public void Sample_draws_from_the_given_ops_and_carries_only_the_declarations_it_uses()
    {
        using var folder = new TempFolder();
        var primitives = folder.Write("vocab.json", """
            {"wide5": {"kind": "sepconv", "kernel": 5}, "bneck3": {"kind": "mbconv", "kernel": 3, "se": 0.25, "act": "silu"},
             "unused": {"kind": "factorized", "kernel": 7}}
            """);
        var result = ProcessRunner.Cellc("sample", "--levels", "4", "--count", "40", "--seed", "7", "--primitives", primitives,
            "--ops", "conv1x1,wide5,bneck3,identity");
        Assert.Equal(0, result.ExitCode);
        var lines = result.Stdout.Split('\n', StringSplitOptions.RemoveEmptyEntries);
        Assert.Equal(40, lines.Length);
        var seen = new HashSet<string>();
        foreach (var line in lines)
        {
            var genotype = Parse(line);
            var used = genotype.Levels[0].Motifs.SelectMany(m => m.Edges).Select(e => e.Op).ToHashSet();
            seen.UnionWith(used);
            Assert.Subset(new HashSet<string> { "conv1x1", "wide5", "bneck3", "identity" }, used);
            var declared = genotype.Declarations?.Declared.Select(d => d.Name).ToHashSet() ?? [];
            Assert.Equal(used.Intersect(["wide5", "bneck3"]).ToHashSet(), declared);
        }
        Assert.Equal(4, seen.Count);

        var again = ProcessRunner.Cellc("sample", "--levels", "4", "--count", "40", "--seed", "7", "--primitives", primitives,
            "--ops", "conv1x1,wide5,bneck3,identity");
        Assert.Equal(result.Stdout, again.Stdout);
    }

    [Theory]
    [InlineData("conv1x1,nope", "unknown op 'nope'")]
    [InlineData("conv1x1,none", "--none-weight")]
    [InlineData("conv1x1,conv1x1", "listed twice")]
    public void Sample_refuses_a_bad_alphabet(string ops, string words)
    {
        var result = ProcessRunner.Cellc("sample", "--levels", "4", "--count", "3", "--ops", ops);
        Assert.Equal(2, result.ExitCode);
        Assert.Contains("--ops", result.Stderr);
        Assert.Contains(words, result.Stderr);
        Assert.Equal("", result.Stdout);
    }

    [Fact]
    public void A_bad_primitives_file_for_sample_names_its_path()
    {
        using var folder = new TempFolder();
        var primitives = folder.Write("vocab.json", """{"wide5": {"kind": "sepconv", "kernel": 5, "repeat": 4}}""");
        var result = ProcessRunner.Cellc("sample", "--levels", "4", "--count", "3", "--primitives", primitives);
        Assert.Equal(2, result.ExitCode);
        Assert.Contains($"{primitives}: wide5.repeat:", result.Stderr);
    }
}
