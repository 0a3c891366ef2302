using System.Text.Json;
using CellCompiler.Tests.Support;

namespace CellCompiler.Tests;

/// <summary>
/// A genotype's `meta` object (contract section 1) survives the trip into `check` records unchanged,
/// never changes the hash, and a cell with no trainable op carries the `trivial-cell` note.
/// </summary>
public sealed class RecordMetaTests
{
    private const string Cell = """{"nodes":3,"motifs":{"cell":{"edges":[[0,1,"conv1x1"],[1,2,"identity"],[0,2,"maxpool3x3"]]}}}""";

    [Fact]
    public void Meta_is_copied_unchanged_and_does_not_change_the_hash()
    {
        using var folder = new TempFolder();
        const string meta = """{"generation":12,"parent":"s7-0042","scores":{"top1":0.8125,"tags":["kelp",null,true]},"note":"é"}""";
        var population = folder.Write("pop.jsonl",
            $$"""{"id":"with","format":"genotype/1","meta":{{meta}},"levels":[{{Cell}}]}""" + "\n" +
            $$"""{"id":"without","format":"genotype/1","levels":[{{Cell}}]}""" + "\n");
        var result = ProcessRunner.Cellc("check", population, "--json", "--no-cache", "--ordered");
        Assert.Equal(0, result.ExitCode);
        var records = result.Stdout.Split('\n', StringSplitOptions.RemoveEmptyEntries).Select(l => JsonDocument.Parse(l).RootElement).ToList();
        Assert.Equal(2, records.Count);
        var with = records.Single(r => r.GetProperty("id").GetString() == "with");
        var without = records.Single(r => r.GetProperty("id").GetString() == "without");
        // Same JSON value, member for member (JsonElement.DeepEquals compares structure and values).
        Assert.True(JsonElement.DeepEquals(JsonDocument.Parse(meta).RootElement, with.GetProperty("meta")));
        Assert.False(without.TryGetProperty("meta", out _));
        Assert.Equal(without.GetProperty("hash").GetString(), with.GetProperty("hash").GetString());
    }

    [Fact]
    public void Meta_must_be_an_object()
    {
        using var folder = new TempFolder();
        var file = folder.Write("g.json", $$"""{"format":"genotype/1","meta":[1,2],"levels":[{{Cell}}]}""");
        var result = ProcessRunner.Cellc("compile", file, "--no-write");
        Assert.Equal(2, result.ExitCode);
        Assert.Contains($"{file}: meta: meta must be a JSON object", result.Stderr);
    }

    [Fact]
    public void A_cell_of_pools_and_identities_is_noted_as_trivial()
    {
        using var folder = new TempFolder();
        var population = folder.Write("pop.jsonl",
            """{"id":"pools","format":"genotype/1","levels":[{"nodes":3,"motifs":{"cell":{"edges":[[0,1,"maxpool3x3"],[1,2,"identity"],[0,2,"avgpool3x3"]]}}}]}""" + "\n" +
            $$"""{"id":"convs","format":"genotype/1","levels":[{{Cell}}]}""" + "\n");
        var result = ProcessRunner.Cellc("check", population, "--json", "--no-cache", "--ordered");
        var records = result.Stdout.Split('\n', StringSplitOptions.RemoveEmptyEntries).Select(l => JsonDocument.Parse(l).RootElement)
            .ToDictionary(r => r.GetProperty("id").GetString()!);
        Assert.Equal(["trivial-cell"], records["pools"].GetProperty("notes").EnumerateArray().Select(n => n.GetString()));
        Assert.Empty(records["convs"].GetProperty("notes").EnumerateArray());
    }
}
