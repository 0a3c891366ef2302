using System.Diagnostics;
using System.Text;
using System.Text.RegularExpressions;
using CellCompiler.Input;
using CellCompiler.Tests.Support;

namespace CellCompiler.Tests;

/// <summary>
/// Contract section 5: bad input or a bad command line exits with code 2, names the file, the JSON
/// path and the problem on stderr, prints no stack trace and writes no file (not even a temporary
/// one). Every case runs the real `cellc` process in its own temporary folder.
/// </summary>
public sealed class BadInputTests
{
    /// <summary>What a bad-input case writes and what stderr must say about it.</summary>
    /// <param name="Genotype">Genotype JSON written to bad-{id}.json, or null to pass a file that does not exist.</param>
    /// <param name="Skeleton">Skeleton JSON written to skeleton-{id}.json and passed with --skeleton, or null.</param>
    /// <param name="Args">Further command-line arguments.</param>
    /// <param name="JsonPath">The JSON path (or option name) stderr must name, or null where there is none.</param>
    /// <param name="Names">Which file stderr must name.</param>
    /// <param name="Keywords">Words that describe the problem; stderr must hold each of them.</param>
    private sealed record BadCase(string? Genotype, string? Skeleton, string[] Args, string? JsonPath, Named Names, params string[] Keywords);

    private enum Named { GenotypeFile, SkeletonFile, Nothing }

    // A small, valid two-level genotype: the base the bad cases change one thing of.
    private const string Good = """
        {"format": "genotype/1", "name": "bad",
         "levels": [
           {"nodes": 3, "motifs": {"a": {"edges": [[0, 1, "conv1x1"], [1, 2, "identity"]]}}},
           {"nodes": 3, "motifs": {"cell": {"edges": [[0, 1, "a"], [1, 2, "a"]]}}}
         ]}
        """;

    private const string GoodSkeleton = """
        {"format": "skeleton/1", "input": {"channels": 3, "height": 16, "width": 16}, "classes": 4,
         "stem": {"op": "conv3x3", "stride": 1, "pool": false},
         "stages": [{"cells": 1, "channels": 8}, {"cells": 1, "channels": 16}],
         "reduction": "sepconv3x3", "merge": "concat"}
        """;

    private static string TwoLevels(string level0Motifs, string level1Edges, int nodes0 = 3, int nodes1 = 3, string rootExtra = "", string level1Extra = "") =>
        "{\"format\": \"genotype/1\", \"name\": \"bad\"" + rootExtra + ",\n \"levels\": [\n" +
        "  {\"nodes\": " + nodes0 + ", \"motifs\": {" + level0Motifs + "}},\n" +
        "  {\"nodes\": " + nodes1 + ", \"motifs\": {\"cell\": {\"edges\": [" + level1Edges + "]}}" + level1Extra + "}\n]}";

    private const string MotifA = """ "a": {"edges": [[0, 1, "conv1x1"], [1, 2, "identity"]]} """;
    private const string CellEdges = """ [0, 1, "a"], [1, 2, "a"] """;

    private static string Level0Edges(string edges) => TwoLevels($$""" "a": {"edges": [{{edges}}]} """, CellEdges);

    private static string SkeletonWith(string find, string replace)
    {
        Assert.Contains(find, GoodSkeleton);
        return GoodSkeleton.Replace(find, replace);
    }

    private static readonly Dictionary<string, BadCase> Cases = new()
    {
        // ---- the genotype file ----
        ["malformed-json"] = new(Good[..^20], null, [], null, Named.GenotypeFile, "malformed JSON", "line"),
        ["trailing-comma"] = new(Good.Replace("\"identity\"]]}", "\"identity\"],]}"), null, [], null, Named.GenotypeFile, "malformed JSON"),
        ["root-not-object"] = new("[1, 2, 3]", null, [], null, Named.GenotypeFile, "expected an object", "array"),
        ["missing-levels"] = new("""{"format": "genotype/1"}""", null, [], null, Named.GenotypeFile, "missing", "'levels'"),
        ["unknown-field-root"] = new(TwoLevels(MotifA, CellEdges, rootExtra: """, "colour": "red" """), null, [],
            "colour", Named.GenotypeFile, "unknown field", "'colour'"),
        ["unknown-field-level"] = new(TwoLevels(MotifA, CellEdges, level1Extra: """, "width": 4 """), null, [],
            "levels[1].width", Named.GenotypeFile, "unknown field", "'width'"),
        ["unknown-field-motif"] = new(TwoLevels(""" "a": {"edges": [[0, 2, "conv1x1"]], "weight": 1} """, CellEdges), null, [],
            "levels[0].motifs.a.weight", Named.GenotypeFile, "unknown field", "'weight'"),
        ["wrong-format"] = new(Good.Replace("genotype/1", "genotype/2"), null, [], "format", Named.GenotypeFile, "unsupported format", "genotype/2", "genotype/1"),
        ["edge-backward"] = new(Level0Edges(""" [0, 1, "conv1x1"], [2, 1, "conv3x3"] """), null, [],
            "levels[0].motifs.a.edges[1]", Named.GenotypeFile, "[2, 1]", "forward"),
        ["edge-self-loop"] = new(TwoLevels(MotifA, """ [0, 1, "a"], [1, 1, "a"], [1, 2, "a"] """), null, [],
            "levels[1].motifs.cell.edges[1]", Named.GenotypeFile, "[1, 1]", "forward"),
        ["edge-out-of-range"] = new(Level0Edges(""" [0, 1, "conv1x1"], [1, 3, "conv1x1"] """), null, [],
            "levels[0].motifs.a.edges[1]", Named.GenotypeFile, "out of range", "[1, 3]"),
        ["duplicate-motif-key"] = new(TwoLevels(MotifA + ", " + MotifA, CellEdges), null, [],
            "levels[0].motifs", Named.GenotypeFile, "'a'", "more than once"),
        ["duplicate-root-key"] = new(Good.Replace("\"name\": \"bad\",", "\"name\": \"bad\", \"name\": \"again\","), null, [],
            null, Named.GenotypeFile, "'name'", "more than once"),
        ["edge-negative-index"] = new(Level0Edges(""" [-1, 2, "conv1x1"] """), null, [],
            "levels[0].motifs.a.edges[0]", Named.GenotypeFile, "out of range"),
        ["edge-length-2"] = new(Level0Edges(""" [0, 1, "conv1x1"], [1, 2] """), null, [],
            "levels[0].motifs.a.edges[1]", Named.GenotypeFile, "[from, to, op]", "length 2"),
        ["edge-length-4"] = new(TwoLevels(MotifA, """ [0, 1, "a"], [1, 2, "a", 7] """), null, [],
            "levels[1].motifs.cell.edges[1]", Named.GenotypeFile, "[from, to, op]", "length 4"),
        ["edge-not-array"] = new(Level0Edges(""" {"from": 0, "to": 2, "op": "conv1x1"} """), null, [],
            "levels[0].motifs.a.edges[0]", Named.GenotypeFile, "[from, to, op]", "object"),
        ["edge-duplicate"] = new(TwoLevels(MotifA, """ [0, 1, "a"], [1, 2, "a"], [0, 1, "identity"] """), null, [],
            "levels[1].motifs.cell.edges[2]", Named.GenotypeFile, "duplicate", "[0, 1]"),
        ["unknown-op-level0"] = new(Level0Edges(""" [0, 1, "conv1x1"], [1, 2, "conv5x5"] """), null, [],
            "levels[0].motifs.a.edges[1]", Named.GenotypeFile, "unknown op", "'conv5x5'"),
        ["motif-name-at-level0"] = new(TwoLevels(""" "a": {"edges": [[0, 2, "conv1x1"]]}, "b": {"edges": [[0, 2, "a"]]} """, CellEdges), null, [],
            "levels[0].motifs.b.edges[0]", Named.GenotypeFile, "unknown op", "'a'"),
        ["undefined-motif-level1"] = new(TwoLevels(MotifA, """ [0, 1, "a"], [1, 2, "b"] """), null, [],
            "levels[1].motifs.cell.edges[1]", Named.GenotypeFile, "undefined motif", "'b'"),
        ["primitive-at-level1"] = new(TwoLevels(MotifA, """ [0, 1, "conv1x1"], [1, 2, "a"] """), null, [],
            "levels[1].motifs.cell.edges[0]", Named.GenotypeFile, "primitive", "'conv1x1'", "level 1"),
        ["motif-shadows-primitive"] = new(TwoLevels(""" "conv3x3": {"edges": [[0, 2, "conv1x1"]]} """, """ [0, 2, "conv3x3"] """), null, [],
            "levels[0].motifs.conv3x3", Named.GenotypeFile, "shadows", "primitive"),
        ["invalid-motif-name"] = new(TwoLevels(""" "9lives": {"edges": [[0, 2, "conv1x1"]]} """, """ [0, 2, "9lives"] """), null, [],
            "levels[0].motifs.9lives", Named.GenotypeFile, "invalid motif name", "'9lives'"),
        ["too-many-levels"] = new(Levels(9), null, [], "levels", Named.GenotypeFile, "9 levels", "limit", "8"),
        ["too-many-nodes"] = new(TwoLevels(MotifA, CellEdges, nodes1: 65), null, [],
            "levels[1].nodes", Named.GenotypeFile, "65", "out of range", "64"),
        ["too-few-nodes"] = new(TwoLevels(""" "a": {"edges": []} """, CellEdges, nodes0: 1), null, [],
            "levels[0].nodes", Named.GenotypeFile, "1 is out of range", "between 2 and 64"),
        ["too-many-motifs"] = new(ManyMotifs(257), null, [], "levels[0].motifs", Named.GenotypeFile, "257 motifs", "limit is 256"),
        ["json-over-1MiB"] = new(Padded(Good, Limits.MaxJsonBytes + 1), null, [], null, Named.GenotypeFile,
            "1,048,577 bytes", "the limit is 1,048,576 bytes (1 MiB)"),
        ["expanded-over-100000-ops"] = new(Exploding(), null, [], "levels[7].motifs.cell", Named.GenotypeFile,
            "fully expanded", "100,000 primitive ops", "limit"),
        ["last-level-two-motifs"] = new("""
            {"format": "genotype/1",
             "levels": [
               {"nodes": 3, "motifs": {"a": {"edges": [[0, 1, "conv1x1"], [1, 2, "identity"]]}}},
               {"nodes": 3, "motifs": {"cell": {"edges": [[0, 1, "a"], [1, 2, "a"]]}, "spare": {"edges": [[0, 2, "a"]]}}}
             ]}
            """, null, [], "levels[1].motifs", Named.GenotypeFile, "exactly one motif", "found 2"),
        ["missing-file"] = new(null, null, [], null, Named.GenotypeFile, "not found"),

        // ---- the skeleton file ----
        ["skeleton-zero-stages"] = new(Good, Regex.Replace(GoodSkeleton, @"""stages"": \[.*?\],", "\"stages\": [],"), [],
            "stages", Named.SkeletonFile, "at least 1", "found 0"),
        ["skeleton-zero-channels"] = new(Good, SkeletonWith("\"channels\": 8", "\"channels\": 0"), [],
            "stages[0].channels", Named.SkeletonFile, "0 is out of range"),
        ["skeleton-negative-channels"] = new(Good, SkeletonWith("\"channels\": 16}", "\"channels\": -16}"), [],
            "stages[1].channels", Named.SkeletonFile, "-16 is out of range"),
        ["skeleton-zero-cells"] = new(Good, SkeletonWith("{\"cells\": 1, \"channels\": 16}", "{\"cells\": 0, \"channels\": 16}"), [],
            "stages[1].cells", Named.SkeletonFile, "0 is out of range"),
        ["skeleton-zero-input-height"] = new(Good, SkeletonWith("\"height\": 16", "\"height\": 0"), [],
            "input.height", Named.SkeletonFile, "0 is out of range"),
        ["skeleton-negative-input-channels"] = new(Good, SkeletonWith("\"channels\": 3", "\"channels\": -3"), [],
            "input.channels", Named.SkeletonFile, "-3 is out of range"),
        ["skeleton-zero-classes"] = new(Good, SkeletonWith("\"classes\": 4", "\"classes\": 0"), [],
            "classes", Named.SkeletonFile, "0 is out of range"),
        ["skeleton-unknown-field-root"] = new(Good, SkeletonWith("\"classes\": 4", "\"classes\": 4, \"dropout\": 0.1"), [],
            "dropout", Named.SkeletonFile, "unknown field", "'dropout'"),
        ["skeleton-unknown-field-stem"] = new(Good, SkeletonWith("\"pool\": false", "\"pool\": false, \"kernel\": 5"), [],
            "stem.kernel", Named.SkeletonFile, "unknown field", "'kernel'"),
        ["skeleton-wrong-format"] = new(Good, SkeletonWith("skeleton/1", "genotype/1"), [],
            "format", Named.SkeletonFile, "unsupported format", "skeleton/1"),
        ["skeleton-unknown-preset"] = new(Good, null, ["--skeleton", "tiny"], null, Named.Nothing, "tiny", "not a preset", "proxy"),

        // ---- the command line ----
        ["opset-12"] = new(Good, null, ["--opset", "12"], "--opset", Named.Nothing, "between 13 and 21", "found 12"),
        ["opset-22"] = new(Good, null, ["--opset", "22"], "--opset", Named.Nothing, "between 13 and 21", "found 22"),
        ["input-3x32"] = new(Good, null, ["--input", "3x32"], "--input", Named.Nothing, "'3x32'", "CxHxW"),
        ["input-zero-side"] = new(Good, null, ["--input", "3x0x32"], "--input", Named.Nothing, "3x0x32", "out of range"),
        ["cells-1,x"] = new(Good, null, ["--cells", "1,x"], "--cells", Named.Nothing, "'1,x'", "integers"),
        ["cells-zero"] = new(Good, null, ["--cells", "0"], "--cells", Named.Nothing, "0 cells"),
        ["channels-wrong-count"] = new(Good, null, ["--cells", "1,1", "--channels", "8,16,32"], "--cells", Named.Nothing, "2 values", "3 stages"),
        ["classes-zero"] = new(Good, null, ["--classes", "0"], "--classes", Named.Nothing, "found 0"),
        ["merge-avg"] = new(Good, null, ["--merge", "avg"], "--merge", Named.Nothing, "'avg'", "concat or sum"),
        ["reduction-maxpool"] = new(Good, null, ["--reduction", "maxpool3x3"], "--reduction", Named.Nothing, "'maxpool3x3'", "sepconv3x3"),
        ["width-mult--1"] = new(Good, null, ["--width-mult", "-1"], "--width-mult", Named.Nothing, "positive", "-1"),
        ["unknown-option"] = new(Good, null, ["--frobnicate"], "--frobnicate", Named.Nothing, "Unrecognized"),
        ["missing-genotype"] = new(null, null, ["--no-genotype"], "GENOTYPE", Named.Nothing, "missing"),
    };

    public static TheoryData<string> CaseNames() => new(Cases.Keys);

    [Theory]
    [MemberData(nameof(CaseNames))]
    public void Bad_input_exits_2_names_file_path_and_problem_and_writes_nothing(string id)
    {
        var bad = Cases[id];
        using var temp = new TempFolder();
        var outDir = Directory.CreateDirectory(temp.File("out")).FullName;
        var outFile = Path.Combine(outDir, "model.onnx");

        var args = new List<string> { "compile" };
        string? genotypePath = null;
        if (bad.Args is ["--no-genotype"])
        {
            // No GENOTYPE argument at all.
        }
        else
        {
            genotypePath = bad.Genotype is null ? temp.File($"bad-{id}.json") : temp.Write($"bad-{id}.json", bad.Genotype);
            args.Add(genotypePath);
        }
        string? skeletonPath = null;
        if (bad.Skeleton is not null)
        {
            skeletonPath = temp.Write($"skel-{id}.json", bad.Skeleton);
            args.AddRange(["--skeleton", skeletonPath]);
        }
        args.AddRange(bad.Args.Where(a => a != "--no-genotype"));
        args.AddRange(["-o", outFile]);

        var result = ProcessRunner.Cellc(args, null, outDir);

        AssertRejected(result, 2, outDir, outFile, string.Join(' ', args));
        var stderr = result.Stderr;
        switch (bad.Names)
        {
            case Named.GenotypeFile:
                Assert.Contains(genotypePath!, stderr);
                break;
            case Named.SkeletonFile:
                Assert.Contains(skeletonPath!, stderr);
                // The genotype is fine, so the message must not blame it.
                Assert.DoesNotContain(Path.GetFileName(genotypePath!), stderr);
                break;
        }
        if (bad.JsonPath is not null)
            AssertNamesPath(stderr, bad.JsonPath);
        foreach (var keyword in bad.Keywords)
            Assert.True(stderr.Contains(keyword, StringComparison.Ordinal),
                $"[{id}] stderr should mention \"{keyword}\":\n{stderr}");
    }

    [Fact]
    public void Dead_cell_exits_1_says_output_does_not_depend_on_input_and_writes_nothing()
    {
        using var temp = new TempFolder();
        var outDir = Directory.CreateDirectory(temp.File("out")).FullName;
        var outFile = Path.Combine(outDir, "dead.onnx");
        var args = new[] { "compile", RepoPaths.Fixture("tidepool-deadcell.json"), "-o", outFile };

        var result = ProcessRunner.Cellc(args, null, outDir);

        AssertRejected(result, 1, outDir, outFile, string.Join(' ', args));
        Assert.Contains("does not depend on its input", result.Stderr);
        Assert.Contains("'cell'", result.Stderr);
        Assert.Contains("levels[1].motifs.cell", result.Stderr);
    }

    [Fact]
    public void Dead_cell_with_json_still_exits_1_and_prints_no_model_summary()
    {
        using var temp = new TempFolder();
        var outDir = Directory.CreateDirectory(temp.File("out")).FullName;
        var outFile = Path.Combine(outDir, "dead.onnx");
        var args = new[] { "compile", RepoPaths.Fixture("tidepool-deadcell.json"), "--json", "-o", outFile };

        var result = ProcessRunner.Cellc(args, null, outDir);

        AssertRejected(result, 1, outDir, outFile, string.Join(' ', args));
        Assert.Contains("does not depend on its input", result.Stderr);
    }

    /// <summary>
    /// The hostile genotype of the case "expanded-over-100000-ops" (2016^7 * 2016 primitive ops if
    /// expanded) must be refused by counting, not by expanding: quickly, in-process and through the CLI.
    /// </summary>
    [Fact]
    public void Expansion_limit_fails_fast_without_expanding()
    {
        var json = Exploding();
        Assert.True(Encoding.UTF8.GetByteCount(json) < Limits.MaxJsonBytes, "the hostile genotype must pass the size limit to reach the expansion limit");

        var watch = Stopwatch.StartNew();
        var error = Assert.Throws<InputException>(() => GenotypeReader.Parse(json, "hostile.json", "hostile"));
        watch.Stop();
        Assert.Equal("levels[7].motifs.cell", error.JsonPath);
        Assert.Equal("hostile.json", error.Origin);
        Assert.Contains("100,000", error.Problem);
        Assert.True(watch.Elapsed < TimeSpan.FromSeconds(2), $"refusing took {watch.Elapsed.TotalMilliseconds:F0} ms in-process");

        using var temp = new TempFolder();
        var outDir = Directory.CreateDirectory(temp.File("out")).FullName;
        var outFile = Path.Combine(outDir, "hostile.onnx");
        var path = temp.Write("hostile.json", json);
        var processWatch = Stopwatch.StartNew();
        // A short hard timeout: a hang is a failure, not a slow pass.
        var result = ProcessRunner.Run("dotnet", [RepoPaths.CliDll, "compile", path, "-o", outFile], null, outDir, TimeSpan.FromSeconds(30));
        processWatch.Stop();
        AssertRejected(result, 2, outDir, outFile, "compile hostile.json");
        AssertNamesPath(result.Stderr, "levels[7].motifs.cell");
        Assert.True(processWatch.Elapsed < TimeSpan.FromSeconds(10), $"the CLI took {processWatch.Elapsed.TotalMilliseconds:F0} ms to refuse");
    }

    /// <summary>The limits are inclusive: exactly 100,000 expanded primitive ops is accepted; 110,000 is not.</summary>
    [Fact]
    public void Expansion_limit_is_inclusive_at_100000_ops()
    {
        // Five levels of 11-node chains: level 0 has 10 convs, each level above uses the one below 10 times.
        var exact = Chains(levels: 5, extraPrimitive: false);
        var genotype = GenotypeReader.Parse(exact, "exact.json", "exact");
        Assert.Equal(5, genotype.Levels.Count);

        var over = Chains(levels: 5, extraPrimitive: true); // 11 ops at level 0 -> 110,000
        var error = Assert.Throws<InputException>(() => GenotypeReader.Parse(over, "over.json", "over"));
        Assert.Equal("levels[4].motifs.cell", error.JsonPath);
    }

    /// <summary>Exactly 1 MiB of JSON is still accepted (the limit is inclusive); one byte more is the case "json-over-1MiB".</summary>
    [Fact]
    public void Json_of_exactly_1MiB_is_accepted()
    {
        using var temp = new TempFolder();
        var path = temp.Write("big.json", Padded(Good, Limits.MaxJsonBytes));
        Assert.Equal(1L << 20, new FileInfo(path).Length);
        var outFile = temp.File("big.onnx");

        var result = ProcessRunner.Cellc("compile", path, "-o", outFile);

        Assert.True(result.ExitCode == 0, $"exit {result.ExitCode}\n{result.Stderr}");
        Assert.True(File.Exists(outFile));
    }

    [Fact]
    public void Eight_levels_and_64_nodes_and_256_motifs_are_within_the_limits()
    {
        // The largest structure the limits allow must parse: this guards against an off-by-one in the limit checks.
        var eightLevels = GenotypeReader.Parse(Levels(8), "eight.json", "eight");
        Assert.Equal(8, eightLevels.Levels.Count);
        var wide = GenotypeReader.Parse(ManyMotifs(256), "wide.json", "wide");
        Assert.Equal(256, wide.Levels[0].Motifs.Count);
        var tall = GenotypeReader.Parse(TwoLevels(MotifA, CellEdges, nodes1: 64), "tall.json", "tall");
        Assert.Equal(64, tall.Levels[1].Nodes);
    }

    // ---------------------------------------------------------------- helpers

    private static void AssertRejected(ProcessResult result, int expectedExitCode, string outDir, string outFile, string command)
    {
        var context = $"cellc {command}\nexit {result.ExitCode}\nstdout:\n{result.Stdout}\nstderr:\n{result.Stderr}";
        Assert.True(result.ExitCode == expectedExitCode, $"expected exit code {expectedExitCode}\n{context}");
        Assert.False(string.IsNullOrWhiteSpace(result.Stderr), $"stderr must explain the problem\n{context}");
        Assert.True(!result.Stderr.Contains("   at ", StringComparison.Ordinal), $"stack trace on stderr\n{context}");
        Assert.True(!result.Stderr.Contains("Exception", StringComparison.Ordinal), $"exception text on stderr\n{context}");
        Assert.True(!result.Stdout.Contains("Exception", StringComparison.Ordinal), $"exception text on stdout\n{context}");
        Assert.True(result.Stdout.Length == 0, $"a failed compile must print no summary\n{context}");
        Assert.False(File.Exists(outFile), $"{outFile} was written\n{context}");
        var stray = Directory.EnumerateFileSystemEntries(outDir).Select(Path.GetFileName).ToList();
        Assert.True(stray.Count == 0, $"files left in the output folder: {string.Join(", ", stray)}\n{context}");
    }

    /// <summary>The path must appear as a whole: `edges[1]` must not be satisfied by `edges[10]` or `edges[1].x`.</summary>
    private static void AssertNamesPath(string stderr, string path) =>
        Assert.True(Regex.IsMatch(stderr, "(?<![\\w.\\[\\]-])" + Regex.Escape(path) + "(?![\\w.\\[-])"),
            $"stderr should name the path {path}:\n{stderr}");

    /// <summary>Valid JSON padded with spaces to exactly <paramref name="bytes"/> bytes.</summary>
    private static string Padded(string json, int bytes)
    {
        var length = Encoding.UTF8.GetByteCount(json);
        Assert.True(length < bytes);
        return json + new string(' ', bytes - length);
    }

    /// <summary>A valid chain of <paramref name="count"/> levels with one motif each.</summary>
    private static string Levels(int count)
    {
        var levels = new List<string> { """{"nodes": 2, "motifs": {"m0": {"edges": [[0, 1, "conv1x1"]]}}}""" };
        for (var k = 1; k < count; k++)
        {
            var name = k == count - 1 ? "cell" : $"m{k}";
            levels.Add("{\"nodes\": 2, \"motifs\": {\"" + name + "\": {\"edges\": [[0, 1, \"m" + (k - 1) + "\"]]}}}");
        }
        return $$"""{"format": "genotype/1", "levels": [{{string.Join(",\n", levels)}}]}""";
    }

    /// <summary><paramref name="count"/> motifs at level 0 and a cell that uses the first.</summary>
    private static string ManyMotifs(int count)
    {
        var motifs = Enumerable.Range(0, count).Select(i => $$""" "m{{i}}": {"edges": [[0, 1, "conv1x1"]]} """);
        return "{\"format\": \"genotype/1\", \"levels\": [\n" +
            "  {\"nodes\": 2, \"motifs\": {" + string.Join(",", motifs) + "}},\n" +
            "  {\"nodes\": 2, \"motifs\": {\"cell\": {\"edges\": [[0, 1, \"m0\"]]}}}]}";
    }

    /// <summary>
    /// 8 levels of 64-node motifs with every forward edge (2016 per motif), each using the motif below:
    /// 2016^8 (about 2.7e26) primitive ops if expanded, yet only about 200 KB of JSON.
    /// </summary>
    private static string Exploding()
    {
        const int nodes = 64;
        var levels = new List<string>();
        for (var k = 0; k < 8; k++)
        {
            var op = k == 0 ? "conv3x3" : $"m{k - 1}";
            var name = k == 7 ? "cell" : $"m{k}";
            var edges = new StringBuilder();
            for (var i = 0; i < nodes; i++)
                for (var j = i + 1; j < nodes; j++)
                    edges.Append(edges.Length == 0 ? "" : ",").Append($"[{i},{j},\"{op}\"]");
            levels.Add("{\"nodes\": " + nodes + ", \"motifs\": {\"" + name + "\": {\"edges\": [" + edges + "]}}}");
        }
        return $$"""{"format": "genotype/1", "name": "hostile", "levels": [{{string.Join(",\n", levels)}}]}""";
    }

    /// <summary>Levels of 11-node chains (10 edges each): 10^levels primitive ops, or 11 * 10^(levels-1) with an extra level-0 conv.</summary>
    private static string Chains(int levels, bool extraPrimitive)
    {
        var list = new List<string>();
        for (var k = 0; k < levels; k++)
        {
            var op = k == 0 ? "conv1x1" : $"m{k - 1}";
            var name = k == levels - 1 ? "cell" : $"m{k}";
            var edges = Enumerable.Range(0, 10).Select(i => $"[{i},{i + 1},\"{op}\"]").ToList();
            if (k == 0 && extraPrimitive) edges.Add("[0,10,\"conv3x3\"]");
            list.Add("{\"nodes\": 11, \"motifs\": {\"" + name + "\": {\"edges\": [" + string.Join(",", edges) + "]}}}");
        }
        return $$"""{"format": "genotype/1", "levels": [{{string.Join(",\n", list)}}]}""";
    }

    [Fact]
    public void Whole_network_over_the_op_limit_exits_2_before_building_anything()
    {
        var json = HostileGenotypes.OverTheNetworkOpLimit();
        using var folder = new TempFolder();
        var path = folder.Write("huge.json", json);
        var output = folder.File("huge.onnx");
        var result = ProcessRunner.Cellc(["compile", path, "-o", output], null, folder.Path);
        Assert.Equal(2, result.ExitCode);
        Assert.Contains(path, result.Stderr);
        Assert.Contains("exceeds the limit of 100,000 primitive ops", result.Stderr);
        Assert.Contains("3 cells", result.Stderr);
        Assert.False(File.Exists(output));
    }

    [Fact]
    public void A_byte_order_mark_is_accepted()
    {
        using var folder = new TempFolder();
        var path = folder.File("bom.json");
        File.WriteAllBytes(path, [0xEF, 0xBB, 0xBF, .. Encoding.UTF8.GetBytes(Good)]);
        var result = ProcessRunner.Cellc(["compile", path, "--no-write", "--json"], null, folder.Path);
        Assert.Equal(0, result.ExitCode);
        Assert.Contains("\"params\":", result.Stdout);
    }
}
