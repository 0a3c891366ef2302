using System.Text.Json;
using CellCompiler.Screening;
using CellCompiler.Screening.Merging;
using CellCompiler.Tests.Support;

namespace CellCompiler.Tests;

/// <summary>
/// `cellc merge` through the real process (issue 4: "joins shard outputs and reports missing or
/// duplicated ids (exit 1 if any)"). Shard files are written by hand as JSON Lines records with ids,
/// as `cellc check --json` writes them; the --json summary is read with System.Text.Json.
/// </summary>
public sealed class MergeCommandTests
{
    private static string Record(string id, string status = "ok") =>
        $"{{\"id\":\"{id}\",\"status\":\"{status}\",\"params\":1234,\"ops\":{{\"Conv\":3}},\"warnings\":[]}}";

    /// <summary>A population as `cellc check` reads it (contract section 1): ids, or line-N when absent.</summary>
    private static string Population(params string?[] ids) =>
        string.Concat(ids.Select(id => (id is null
            ? "{\"format\":\"genotype/1\",\"levels\":[]}"
            : $"{{\"id\":\"{id}\",\"format\":\"genotype/1\",\"levels\":[]}}") + "\n"));

    private static string Lines(params string[] lines) => string.Concat(lines.Select(l => l + "\n"));

    private static ProcessResult Merge(TempFolder folder, params string[] args) =>
        ProcessRunner.Cellc(["merge", .. args], null, folder.Path);

    private static JsonElement Summary(ProcessResult result)
    {
        var lines = result.Stdout.Split('\n', StringSplitOptions.RemoveEmptyEntries);
        Assert.Single(lines);
        return JsonDocument.Parse(lines[0]).RootElement.Clone();
    }

    private static List<string> Strings(JsonElement summary, string name) =>
        summary.GetProperty(name).EnumerateArray().Select(e => e.GetString()!).ToList();

    private static List<string> Ids(string path) =>
        File.ReadLines(path).Select(l => JsonDocument.Parse(l).RootElement.GetProperty("id").GetString()!).ToList();

    /// <summary>The folder holds exactly these names: no output, no temporary file left behind.</summary>
    private static void AssertFolderHolds(TempFolder folder, params string[] names) =>
        Assert.Equal(names.Order(StringComparer.Ordinal),
            Directory.GetFileSystemEntries(folder.Path).Select(Path.GetFileName).Order(StringComparer.Ordinal));

    [Fact]
    public void Clean_merge_equals_the_records_in_population_order_and_exits_0()
    {
        using var folder = new TempFolder();
        // The 4th line has no id: `cellc check` names it line-4 (contract section 1).
        var population = folder.Write("population.jsonl", Population("c", "a", "b", null));
        var s0 = folder.Write("shard-0.jsonl", Lines(Record("b"), Record("line-4", "invalid")));
        // "\r\n" endings and field order are the shard's business; the record's bytes are copied as they are.
        var s1 = folder.Write("shard-1.jsonl", "{ \"status\": \"ok\", \"id\": \"a\" }\r\n" + Record("c") + "\n");
        var output = folder.File("merged.jsonl");

        var result = Merge(folder, output, s0, s1, "--population", population, "--json");

        Assert.True(result.ExitCode == 0, result.Stderr);
        Assert.Equal(
            Lines(Record("c"), "{ \"status\": \"ok\", \"id\": \"a\" }", Record("b"), Record("line-4", "invalid")),
            File.ReadAllText(output));
        var summary = Summary(result);
        Assert.Equal(4, summary.GetProperty("records").GetInt64());
        Assert.Equal(4, summary.GetProperty("expected").GetInt64());
        Assert.Empty(Strings(summary, "missing"));
        Assert.Empty(summary.GetProperty("duplicates").EnumerateArray());
        Assert.Empty(summary.GetProperty("malformed").EnumerateArray());
        Assert.Empty(Strings(summary, "unexpected"));
        Assert.Equal(output, summary.GetProperty("output").GetString());
        AssertFolderHolds(folder, "population.jsonl", "shard-0.jsonl", "shard-1.jsonl", "merged.jsonl");

        // Without --json: a human summary on stderr, nothing on stdout, the same file.
        var text = Merge(folder, output, s0, s1, "--population", population);
        Assert.Equal(0, text.ExitCode);
        Assert.Equal("", text.Stdout);
        Assert.Contains("4 records", text.Stderr);
        Assert.Contains("shard-0.jsonl: 2 lines, 2 kept", text.Stderr);
    }

    [Fact]
    public void Missing_and_duplicated_ids_are_reported_with_exit_1()
    {
        using var folder = new TempFolder();
        var population = folder.Write("population.jsonl", Population("a", "b", "c", "d"));
        var s0 = folder.Write("shard-0.jsonl", Lines(Record("a"), Record("b")));
        var s1 = folder.Write("shard-1.jsonl", Lines(Record("d"), Record("a", "broken")));
        var output = folder.File("merged.jsonl");

        var result = Merge(folder, output, s0, s1, "--population", population, "--json");

        Assert.Equal(1, result.ExitCode);
        var summary = Summary(result);
        Assert.Equal(["c"], Strings(summary, "missing"));
        var duplicate = Assert.Single(summary.GetProperty("duplicates").EnumerateArray());
        Assert.Equal("a", duplicate.GetProperty("id").GetString());
        Assert.Equal($"{s0}:1", duplicate.GetProperty("first").GetString());
        Assert.Equal($"{s1}:2", duplicate.GetProperty("again").GetString());
        // OUT is still written: the first record of each id, in population order.
        Assert.Equal(Lines(Record("a"), Record("b"), Record("d")), File.ReadAllText(output));

        var text = Merge(folder, output, s0, s1, "--population", population);
        Assert.Equal(1, text.ExitCode);
        Assert.Contains("missing ids: 1", text.Stderr);
        Assert.Contains($"a: {s1}:2, first at {s0}:1", text.Stderr);
    }

    [Fact]
    public void A_partial_last_line_is_skipped_and_reported()
    {
        using var folder = new TempFolder();
        var population = folder.Write("population.jsonl", Population("a", "b", "c"));
        var s0 = folder.Write("shard-0.jsonl", Lines(Record("a")));
        // A killed writer: the last line has no newline. Even a line that parses whole is not trusted.
        var cut = Record("b") + "\n" + Record("c")[..20];
        var s1 = folder.Write("shard-1.jsonl", cut);
        var s2 = folder.Write("shard-2.jsonl", Record("x"));
        var output = folder.File("merged.jsonl");

        var result = Merge(folder, output, s0, s1, s2, "--population", population, "--json");

        Assert.Equal(1, result.ExitCode);
        var summary = Summary(result);
        var partial = summary.GetProperty("partial").EnumerateArray().ToList();
        Assert.Equal([$"{s1}:2", $"{s2}:1"], partial.Select(p => p.GetProperty("at").GetString()).ToList());
        Assert.Equal(20, partial[0].GetProperty("bytes").GetInt64());
        Assert.Equal("x", partial[1].GetProperty("id").GetString());
        Assert.Equal(["c"], Strings(summary, "missing"));
        Assert.Empty(Strings(summary, "unexpected"));
        Assert.Equal(Lines(Record("a"), Record("b")), File.ReadAllText(output));

        var text = Merge(folder, output, s0, s1, s2, "--population", population);
        Assert.Contains($"{s1}:2: 20 bytes without a final newline", text.Stderr);
    }

    [Fact]
    public void Malformed_lines_are_reported_with_file_and_line()
    {
        using var folder = new TempFolder();
        var population = folder.Write("population.jsonl", Population("a", "b"));
        var s0 = folder.Write("shard-0.jsonl", Lines(
            Record("a"),
            "not json",
            "{\"status\":\"ok\"}",
            "{\"id\":7}",
            "[\"b\"]",
            "{\"id\":\"b\"} trailing",
            "",
            Record("b")));
        var output = folder.File("merged.jsonl");

        var result = Merge(folder, output, s0, "--population", population, "--json");

        Assert.Equal(1, result.ExitCode);
        var summary = Summary(result);
        var malformed = summary.GetProperty("malformed").EnumerateArray().ToList();
        Assert.Equal([$"{s0}:2", $"{s0}:3", $"{s0}:4", $"{s0}:5", $"{s0}:6"],
            malformed.Select(m => m.GetProperty("at").GetString()).ToList());
        Assert.Contains("not valid JSON", malformed[0].GetProperty("problem").GetString());
        Assert.Contains("no 'id'", malformed[1].GetProperty("problem").GetString());
        Assert.Contains("not a string", malformed[2].GetProperty("problem").GetString());
        Assert.Contains("not a JSON object", malformed[3].GetProperty("problem").GetString());
        Assert.Equal(5, summary.GetProperty("malformed_count").GetInt64());
        Assert.Empty(Strings(summary, "missing"));
        Assert.Equal(Lines(Record("a"), Record("b")), File.ReadAllText(output));
        // The blank line 7 is neither a record nor a problem.
        Assert.Equal(1, summary.GetProperty("shards")[0].GetProperty("blank").GetInt64());
    }

    [Fact]
    public void Unexpected_ids_are_reported_and_written_after_the_population()
    {
        using var folder = new TempFolder();
        var population = folder.Write("population.jsonl", Population("a", "b"));
        var s0 = folder.Write("shard-0.jsonl", Lines(Record("z"), Record("b"), Record("a"), Record("y")));
        var output = folder.File("merged.jsonl");

        var result = Merge(folder, output, s0, "--population", population, "--json");

        Assert.Equal(1, result.ExitCode);
        Assert.Equal(["z", "y"], Strings(Summary(result), "unexpected"));
        Assert.Equal(["a", "b", "z", "y"], Ids(output));
    }

    [Fact]
    public void Without_a_population_shard_order_is_kept_and_only_duplicates_are_found()
    {
        using var folder = new TempFolder();
        var s0 = folder.Write("shard-0.jsonl", Lines(Record("q"), Record("b")));
        var s1 = folder.Write("shard-1.jsonl", Lines(Record("a")));
        var output = folder.File("merged.jsonl");

        var clean = Merge(folder, output, s1, s0);
        Assert.Equal(0, clean.ExitCode);
        Assert.Equal(["a", "q", "b"], Ids(output));
        Assert.Contains("missing ids cannot be found", clean.Stderr);

        var doubled = Merge(folder, output, s0, s1, s0, "--json");
        Assert.Equal(1, doubled.ExitCode);
        var summary = Summary(doubled);
        Assert.Equal(["q", "b"], summary.GetProperty("duplicates").EnumerateArray().Select(d => d.GetProperty("id").GetString()).ToList());
        Assert.Equal(JsonValueKind.Null, summary.GetProperty("expected").ValueKind);
        Assert.Equal(["q", "b", "a"], Ids(output));
    }

    [Fact]
    public void A_missing_shard_file_is_exit_2_and_leaves_no_output_nor_temporary_file()
    {
        using var folder = new TempFolder();
        var population = folder.Write("population.jsonl", Population("a", "b"));
        var s0 = folder.Write("shard-0.jsonl", Lines(Record("a")));
        var absent = folder.File("shard-1.jsonl");
        var output = folder.File("merged.jsonl");

        var result = Merge(folder, output, s0, absent, "--population", population);

        Assert.Equal(2, result.ExitCode);
        Assert.Contains(absent, result.Stderr);
        Assert.Contains("file not found", result.Stderr);
        Assert.False(File.Exists(output));
        AssertFolderHolds(folder, "population.jsonl", "shard-0.jsonl");

        // An earlier OUT is left as it was, not replaced by a partial merge.
        File.WriteAllText(output, "earlier\n");
        Assert.Equal(2, Merge(folder, output, s0, absent).ExitCode);
        Assert.Equal("earlier\n", File.ReadAllText(output));
        AssertFolderHolds(folder, "population.jsonl", "shard-0.jsonl", "merged.jsonl");
    }

    [Fact]
    public void Bad_command_lines_are_exit_2_and_never_overwrite_a_shard()
    {
        using var folder = new TempFolder();
        var s0 = folder.Write("shard-0.jsonl", Lines(Record("a")));
        var s1 = folder.Write("shard-1.jsonl", Lines(Record("b")));

        // OUT named as one of the shards would destroy it.
        var same = Merge(folder, s0, s0, s1);
        Assert.Equal(2, same.ExitCode);
        Assert.Equal(Lines(Record("a")), File.ReadAllText(s0));

        Assert.Equal(2, Merge(folder, folder.File("out.jsonl"), s0, "--population", "-").ExitCode);
        Assert.Equal(2, Merge(folder, folder.File("out.jsonl")).ExitCode);
        Assert.Equal(2, Merge(folder, folder.File("no-such-folder/out.jsonl"), s0).ExitCode);
        AssertFolderHolds(folder, "shard-0.jsonl", "shard-1.jsonl");
    }

    /// <summary>
    /// The expected ids are exactly the ids `cellc check` gives its candidates: the merge's id-only
    /// scan against <see cref="PopulationReader"/>, which parses whole genotypes, on lines that
    /// are valid, invalid, id-less, blank, numeric, out of range, or hold surrogate pairs.
    /// </summary>
    [Fact]
    public void Population_ids_match_those_check_gives_its_candidates()
    {
        using var folder = new TempFolder();
        var genotype = File.ReadLines(RepoPaths.Fixture("tidepool-population.jsonl")).First();
        var body = genotype[(genotype.IndexOf("\"format\"", StringComparison.Ordinal))..];
        var lines = new[]
        {
            "{\"id\":\"plain\"," + body,
            "{" + body,
            "   ",
            "{\"id\":42," + body,
            "{\"id\":7.50}",
            "{\"id\":\"\"}",
            "{\"id\":\"" + new string('x', 300) + "\"}",
            "{\"id\":\"v\uD83D\uDE00\"," + body,
            "{\"id\":\"w\uD83D\uDE00\"}",
            "{\"id\":\"\\ud800\"}",
            "{\"id\":\"q\",\"id\":\"r\"}",
            "[\"id\"]",
            "not json {\"id\":\"n\"}",
            "{\"id\":\"\\u0069\",\"levels\":3}\r",
            "{\"id\":null}",
        };
        var path = folder.Write("population.jsonl", string.Join("\n", lines));

        var fromCheck = PopulationReader.ReadFile(path).Select(c => c.Id).ToList();
        var fromMerge = PopulationIds.ReadFile(path).ToList();

        Assert.Equal(fromCheck, fromMerge);
        Assert.Contains("v\uD83D\uDE00", fromMerge);
        // An invalid line keeps a usable id (here a whole surrogate pair); a lone surrogate is not usable.
        Assert.Contains("w\uD83D\uDE00", fromMerge);
        Assert.Contains("line-10", fromMerge);
    }
}
