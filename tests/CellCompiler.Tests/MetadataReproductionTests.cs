using System.Text;
using System.Text.Json;
using System.Text.RegularExpressions;
using CellCompiler.Compilation;
using CellCompiler.Input;
using CellCompiler.Tests.Support;

namespace CellCompiler.Tests;

/// <summary>
/// A model file alone is enough to make it again: its metadata_props, read with the ONNX reference
/// library (Debian's python3-onnx, tests/reference/torch_export_metadata.py), hold the genotype as
/// canonical genotype/1 JSON (name and declarations; not the search's id and meta), the skeleton, the seed, and the
/// tool's version and commit; with the opset from opset_import, compiling them again gives the same bytes.
/// </summary>
public sealed partial class MetadataReproductionTests
{
    [GeneratedRegex("^[0-9a-f]{40}$")]
    private static partial Regex CommitPattern();

    private static JsonElement ReadMetadata(byte[] model)
    {
        using var folder = new TempFolder();
        var path = folder.File("model.onnx");
        File.WriteAllBytes(path, model);
        var answer = Assert.Single(PythonReference.RunJsonLines("torch_export_metadata.py", path));
        Assert.Equal("ok", answer.GetProperty("checker").GetString());
        return answer;
    }

    public static TheoryData<string, string> Genotypes => new()
    {
        { "vocab", File.ReadAllText(RepoPaths.Fixture("tidepool-vocab.json")) },
        { "bottleneck", File.ReadAllText(RepoPaths.Fixture("tidepool-bottleneck.json")) },
        // A population line: id, meta and a declaration that spells a default out.
        { "meta", """
            {"id": "gen7-042", "format": "genotype/1", "name": "pool survey",
             "meta": {"parent": "gen6-013", "mutation": ["swap", 2], "note": "tide \u00e9t\u00e9 \"low\""},
             "primitives": {"mb": {"kind": "mbconv", "kernel": 5, "expand": 6, "se": 0.3, "act": "hardswish"}},
             "levels": [{"nodes": 3, "motifs": {"cell": {"edges": [[0, 1, "mb"], [1, 2, "conv1x1"], [0, 2, "identity"]]}}}]}
            """ },
        { "generated", ExportTorchGenotypes.Json(41, 2, 4) },
    };

    [Theory]
    [MemberData(nameof(Genotypes))]
    public void The_model_file_alone_compiles_to_the_same_bytes(string label, string json)
    {
        var genotype = GenotypeReader.Parse(json, label, label);
        var skeleton = new SkeletonOverrides(Input: new InputSpec(3, 24, 20), Classes: 7, Channels: [8, 12], Cells: [1, 2], Merge: MergeMode.Sum)
            .ApplyTo(SkeletonPresets.All["proxy"]);
        var original = Compiler.Compile(genotype, skeleton, new CompileOptions(Seed: 11, Opset: 13));

        var answer = ReadMetadata(original.OnnxBytes);
        var metadata = answer.GetProperty("metadata_props");
        var genotypeJson = metadata.GetProperty("genotype").GetString()!;
        Assert.Equal(Compiler.RecordedGenotype(genotype), genotypeJson);
        Assert.Equal(GenotypeJson.Serialize(genotype with { Id = null, Meta = null }), genotypeJson);

        // Everything below comes from the file alone.
        var again = Compiler.Compile(
            GenotypeReader.Parse(genotypeJson, "metadata", "metadata"),
            SkeletonReader.Parse(Encoding.UTF8.GetBytes(metadata.GetProperty("skeleton").GetString()!), "metadata"),
            new CompileOptions(long.Parse(metadata.GetProperty("seed").GetString()!, System.Globalization.CultureInfo.InvariantCulture),
                answer.GetProperty("opset").GetInt32()));
        Assert.Equal(original.OnnxBytes, again.OnnxBytes);
    }

    [Fact]
    public void The_genotype_entry_keeps_name_and_declarations_and_leaves_id_and_meta_to_the_records()
    {
        var json = (string)Genotypes.Single(row => (string)row[0] == "meta")[1];
        var genotype = GenotypeReader.Parse(json, "meta", "meta");
        var bytes = Compiler.Compile(genotype, SkeletonPresets.All["proxy"]).OnnxBytes;
        var metadata = ReadMetadata(bytes).GetProperty("metadata_props");
        using var document = JsonDocument.Parse(metadata.GetProperty("genotype").GetString()!);
        var root = document.RootElement;
        Assert.Equal("pool survey", root.GetProperty("name").GetString());
        Assert.False(root.TryGetProperty("id", out _));
        Assert.False(root.TryGetProperty("meta", out _));
        var mb = root.GetProperty("primitives").GetProperty("mb");
        Assert.Equal("mbconv", mb.GetProperty("kind").GetString());
        Assert.Equal(0.3m, mb.GetProperty("se").GetDecimal());
        Assert.Equal("hardswish", mb.GetProperty("act").GetString());
        // The same genotype under another id, with other bookkeeping, is the same model.
        var renamed = GenotypeReader.Parse(json.Replace("gen7-042", "gen9-001").Replace("gen6-013", "gen8-777"), "meta", "meta");
        Assert.Equal(bytes, Compiler.Compile(renamed, SkeletonPresets.All["proxy"]).OnnxBytes);
    }

    [Fact]
    public void Version_and_commit_agree_with_cellc_version_and_the_repository()
    {
        var metadata = ReadMetadata(Compiler.Compile(GenotypeReader.ReadFile(RepoPaths.Fixture("tidepool-h3.json")), SkeletonPresets.All["proxy"]).OnnxBytes);
        var version = ProcessRunner.Cellc("--version");
        Assert.Equal(0, version.ExitCode);
        Assert.Equal(version.Stdout.Trim(), metadata.GetProperty("producer_version").GetString());
        Assert.Equal(version.Stdout.Trim(), metadata.GetProperty("metadata_props").GetProperty("cellc_version").GetString());
        Assert.Equal("cellc", metadata.GetProperty("producer_name").GetString());
        // The one version is Directory.Build.props' <Version>.
        var props = File.ReadAllText(Path.Combine(RepoPaths.Root, "Directory.Build.props"));
        Assert.Equal(Regex.Match(props, "<Version>([^<]+)</Version>").Groups[1].Value, version.Stdout.Trim());

        var commit = metadata.GetProperty("metadata_props").GetProperty("cellc_commit").GetString()!;
        if (!Path.Exists(Path.Combine(RepoPaths.Root, ".git")))
        {
            Assert.Equal(BuildInfo.UnknownCommit, commit);
            return;
        }
        // Built from a checkout: a full commit id that git knows in this repository.
        Assert.Matches(CommitPattern(), commit);
        var known = ProcessRunner.Run("git", ["-C", RepoPaths.Root, "cat-file", "-e", commit + "^{commit}"]);
        Assert.True(known.ExitCode == 0, $"git does not know the recorded commit {commit}: {known.Stderr}");
    }
}
