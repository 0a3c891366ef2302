using System.Security.Cryptography;
using System.Text;
using System.Text.Json;
using CellCompiler.Io;
using CellCompiler.Screening;
using CellCompiler.Tests.Support;

namespace CellCompiler.Tests;

/// <summary>
/// Results files with over-long lines, read by `merge`, `report` and `check --resume` through the
/// real process. The one splitter (Io/JsonLines) has two limits: a line over the record limit
/// (<see cref="CheckRecordJson.MaxLineBytes"/>) is not a record and is reported with its file, line
/// and the limit like any malformed line (README: merge exits 1, report and resume warn and go on);
/// a line running past <see cref="JsonLines.GiveUpBytes"/> stops the reading: exit 2 with the file,
/// the line and that limit, nothing written or changed. Long lines are written in blocks, never held.
/// </summary>
public sealed class OverLongLineTests
{
    private const string RecordLimit = "16,777,216";
    private const string ReadingLimit = "67,108,864";

    /// <summary>A record line of exactly <paramref name="Bytes"/> bytes (a long reason), without its newline.</summary>
    private sealed record LongLine(string Id, long Bytes);

    /// <summary>Records of a real `check` of the fixture population (ok, broken and invalid ones) and its exit code.</summary>
    private static (string Population, string Results, List<string> Lines, int ExitCode) Checked(TempFolder folder)
    {
        var population = folder.Write("pop.jsonl", File.ReadAllText(RepoPaths.Fixture("tidepool-population.jsonl")));
        var results = folder.File("results.jsonl");
        var run = ProcessRunner.Cellc(["check", population, "--out", results, "--no-cache"], null, folder.Path);
        Assert.True(run.ExitCode is 0 or 1, run.Stderr);
        var lines = File.ReadAllLines(results).ToList();
        Assert.True(lines.Count >= 3, $"{lines.Count} records");
        return (population, results, lines, run.ExitCode);
    }

    /// <summary>Writes JSON Lines: each item a line of text or a <see cref="LongLine"/>.</summary>
    private static void Write(string path, IEnumerable<object> lines)
    {
        using var stream = new FileStream(path, FileMode.Create, FileAccess.Write);
        var filler = new byte[1 << 16];
        Array.Fill(filler, (byte)'x');
        foreach (var line in lines)
        {
            if (line is not LongLine(var id, var bytes))
            {
                stream.Write(Encoding.UTF8.GetBytes(line + "\n"));
                continue;
            }
            var head = Encoding.UTF8.GetBytes($"{{\"id\":\"{id}\",\"status\":\"broken\",\"reason\":\"");
            stream.Write(head);
            for (var left = bytes - head.Length - 2; left > 0; left -= filler.Length)
                stream.Write(filler, 0, (int)Math.Min(left, filler.Length));
            stream.Write("\"}\n"u8);
        }
    }

    /// <summary>SHA-256 of a file's first <paramref name="length"/> bytes (all when null), read in blocks.</summary>
    private static string Sha256(string path, long? length = null)
    {
        using var stream = File.OpenRead(path);
        using var hash = IncrementalHash.CreateHash(HashAlgorithmName.SHA256);
        var block = new byte[1 << 16];
        for (var left = length ?? stream.Length; left > 0;)
        {
            var read = stream.Read(block, 0, (int)Math.Min(left, block.Length));
            Assert.True(read > 0, $"{path} ends before byte {length}");
            hash.AppendData(block, 0, read);
            left -= read;
        }
        return Convert.ToHexString(hash.GetHashAndReset());
    }

    private static string IdOf(string line) => JsonDocument.Parse(line).RootElement.GetProperty("id").GetString()!;

    private static void AssertRefusedAtTheReadingLimit(ProcessResult result, string path)
    {
        Assert.Equal(2, result.ExitCode);
        Assert.Contains($"cellc: error: {path}: line 2 runs past {ReadingLimit} bytes", result.Stderr);
        Assert.DoesNotContain("   at ", result.Stderr);
    }

    [Fact]
    public void Merge_reports_a_line_over_the_record_limit_keeps_one_at_it_and_refuses_one_past_the_reading_limit()
    {
        using var folder = new TempFolder();
        var (_, _, lines, _) = Checked(folder);
        var ids = lines.Select(IdOf).ToList();
        // Line 2 exactly at the limit is a record; line 3, one byte longer, is not.
        var shard = folder.File("shard.jsonl");
        Write(shard, [lines[0], new LongLine("at-limit", CheckRecordJson.MaxLineBytes), new LongLine("over-limit", CheckRecordJson.MaxLineBytes + 1L), .. lines.Skip(1)]);
        var output = folder.File("merged.jsonl");

        var result = ProcessRunner.Cellc(["merge", output, shard, "--json"], null, folder.Path);

        Assert.Equal(1, result.ExitCode);
        var malformed = Assert.Single(JsonDocument.Parse(result.Stdout).RootElement.GetProperty("malformed").EnumerateArray());
        Assert.Equal($"{shard}:3", malformed.GetProperty("at").GetString());
        Assert.Equal($"the line is longer than the {RecordLimit}-byte limit", malformed.GetProperty("problem").GetString());
        var merged = CheckRecordJson.ReadFile(output, bad => Assert.Fail($"{bad.Place}: {bad.Problem}")).Select(r => r.Id);
        Assert.Equal([ids[0], "at-limit", .. ids.Skip(1)], merged);

        var giant = folder.File("giant.jsonl");
        Write(giant, [lines[0], new LongLine("giant", JsonLines.GiveUpBytes + 1), .. lines.Skip(1)]);
        var refused = ProcessRunner.Cellc(["merge", folder.File("merged-giant.jsonl"), giant], null, folder.Path);
        AssertRefusedAtTheReadingLimit(refused, giant);
        Assert.False(File.Exists(folder.File("merged-giant.jsonl")));
    }

    [Fact]
    public void Report_skips_a_line_over_the_record_limit_with_a_warning_and_refuses_one_past_the_reading_limit()
    {
        using var folder = new TempFolder();
        var (_, _, lines, _) = Checked(folder);
        var results = folder.File("over.jsonl");
        Write(results, [lines[0], new LongLine("over-limit", CheckRecordJson.MaxLineBytes + 1L), .. lines.Skip(1)]);
        var page = folder.File("over.html");

        var result = ProcessRunner.Cellc(["report", results, "-o", page], null, folder.Path);

        Assert.True(result.ExitCode == 0, result.Stderr);
        Assert.Contains($"cellc: warning: {results}:2: not a check record, skipped: the line is longer than the {RecordLimit}-byte limit", result.Stderr);
        var html = File.ReadAllText(page);
        Assert.Contains($"<code>{results}:2</code>: the line is longer than the {RecordLimit}-byte limit", html);
        Assert.All(lines.Select(IdOf), id => Assert.Contains($"<td class=\"id\"><code>{id}</code>", html));
        Assert.DoesNotContain("over-limit", html);

        var giant = folder.File("giant.jsonl");
        Write(giant, [lines[0], new LongLine("giant", JsonLines.GiveUpBytes + 1), .. lines.Skip(1)]);
        var refused = ProcessRunner.Cellc(["report", giant, "-o", folder.File("giant.html")], null, folder.Path);
        AssertRefusedAtTheReadingLimit(refused, giant);
        Assert.False(File.Exists(folder.File("giant.html")));
    }

    [Fact]
    public void Resume_keeps_a_line_over_the_record_limit_and_refuses_one_past_the_reading_limit_changing_nothing()
    {
        using var folder = new TempFolder();
        var (population, results, lines, exitCode) = Checked(folder);
        var settings = File.ReadAllText(results + ".settings");
        // The last record is left out, so that resuming has a candidate to check.
        Write(results, [lines[0], new LongLine("over-limit", CheckRecordJson.MaxLineBytes + 1L), .. lines.Skip(1).SkipLast(1)]);
        var length = new FileInfo(results).Length;
        var hash = Sha256(results);

        var resumed = ProcessRunner.Cellc(["check", population, "--out", results, "--resume", "--no-cache"], null, folder.Path);

        Assert.True(resumed.ExitCode == exitCode, resumed.Stderr);
        Assert.Contains($"cellc: warning: {results}:2 is not a check record (the line is longer than the {RecordLimit}-byte limit); it is kept", resumed.Stderr);
        // Nothing lost: the file as it was, then the one missing record.
        Assert.Equal(hash, Sha256(results, length));
        using (var tail = File.OpenRead(results))
        {
            tail.Seek(length, SeekOrigin.Begin);
            ReliabilityTests.SameRecords(ReliabilityTests.Records(lines[^1]), ReliabilityTests.Records(new StreamReader(tail).ReadToEnd()));
        }

        Write(results, [lines[0], new LongLine("giant", JsonLines.GiveUpBytes + 1), .. lines.Skip(1)]);
        hash = Sha256(results);
        var refused = ProcessRunner.Cellc(["check", population, "--out", results, "--resume", "--no-cache"], null, folder.Path);
        AssertRefusedAtTheReadingLimit(refused, results);
        Assert.Equal(hash, Sha256(results));
        Assert.Equal(settings, File.ReadAllText(results + ".settings"));
    }
}
