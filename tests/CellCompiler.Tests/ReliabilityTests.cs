using System.Diagnostics;
using System.Text.Json;
using CellCompiler.Tests.Support;

namespace CellCompiler.Tests;

/// <summary>
/// Issue 10, section 2: the properties screening must keep under faults, each through the real
/// process: kill -9 at random moments with --resume, concurrent processes on one cache, a corrupted
/// cache, a full disk and a read-only folder (small tmpfs mounts made by the test; CI runs as root),
/// closed standard streams, hostile ids and inputs. Records are compared without timings and the
/// `cached` flag. Longer variants (more kills, a larger population): bench/reliability-long.sh.
/// </summary>
public sealed class ReliabilityTests
{
    internal static string Population(int count, int firstSeed, Func<int, string>? id = null)
    {
        var lines = Enumerable.Range(firstSeed, count).Select(seed =>
        {
            var json = RandomGenotypes.Json(seed, maxLevels: 2, maxNodes: 4);
            return "{\"id\":\"" + (id?.Invoke(seed) ?? $"cand-{seed}") + "\"," + json[1..];
        });
        return string.Join("\n", lines) + "\n";
    }

    internal static List<JsonElement> Records(string jsonLines) =>
        jsonLines.Split('\n', StringSplitOptions.RemoveEmptyEntries).Select(l => JsonDocument.Parse(l).RootElement.Clone()).ToList();

    private static string Comparable(JsonElement record) =>
        string.Join(";", record.EnumerateObject().Where(p => p.Name is not ("check_ms" or "cached")).Select(p => $"{p.Name}={p.Value.GetRawText()}"));

    internal static void SameRecords(IEnumerable<JsonElement> expected, IEnumerable<JsonElement> actual)
    {
        var a = expected.Select(Comparable).Order(StringComparer.Ordinal).ToList();
        var b = actual.Select(Comparable).Order(StringComparer.Ordinal).ToList();
        Assert.Equal(a.Count, b.Count);
        var first = a.Zip(b).FirstOrDefault(p => p.First != p.Second);
        Assert.True(first == default, $"records differ:\n  {first.First}\n  {first.Second}");
    }

    private static Process Start(string folder, params string[] args)
    {
        var info = new ProcessStartInfo("dotnet") { WorkingDirectory = folder, RedirectStandardOutput = true, RedirectStandardError = true, RedirectStandardInput = true };
        foreach (var arg in new[] { RepoPaths.CliDll }.Concat(args)) info.ArgumentList.Add(arg);
        return Process.Start(info)!;
    }

    /// <summary>A tmpfs of the given size at a fresh folder (read-only when asked); unmounted on dispose.</summary>
    private sealed class Mount : IDisposable
    {
        public string Path { get; }

        public Mount(string parent, string options)
        {
            Path = System.IO.Path.Combine(parent, "mnt");
            Directory.CreateDirectory(Path);
            var result = ProcessRunner.Run("mount", ["-t", "tmpfs", "-o", options, "tmpfs", Path]);
            Assert.True(result.ExitCode == 0, $"mount -t tmpfs -o {options} failed (these tests need root, as in CI): {result.Stderr}");
        }

        public void Dispose() => ProcessRunner.Run("umount", [Path]);
    }

    /// <summary>Whole lines in a results file being written (0 when it does not exist yet).</summary>
    private static int LineCount(string path)
    {
        try { return File.ReadAllBytes(path).Count(b => b == (byte)'\n'); }
        catch (IOException) { return 0; }
    }

    [Fact]
    public void Killed_at_20_random_moments_and_resumed_the_file_equals_an_uninterrupted_run()
    {
        using var folder = new TempFolder();
        // CI: 400 candidates, 20 kills; bench/reliability-long.sh sets more of both.
        var size = int.Parse(Environment.GetEnvironmentVariable("CELLC_RELIABILITY_CANDIDATES") ?? "400");
        var moments = int.Parse(Environment.GetEnvironmentVariable("CELLC_RELIABILITY_KILLS") ?? "20");
        var population = folder.Write("pop.jsonl", Population(size, 20_000));
        var clock = Stopwatch.StartNew();
        var reference = Records(ProcessRunner.Cellc(["check", population, "--json", "--no-cache", "--jobs", "2"], null, folder.Path).Stdout);
        var wholeRunMs = (int)clock.ElapsedMilliseconds;
        Assert.Equal(size, reference.Count);
        // Kill moments scale with this machine's speed: up to the start-up time plus a share of the
        // work, so that the kills spread over start-up and the whole run instead of the population
        // finishing within the first few attempts on a fast machine.
        clock.Restart();
        ProcessRunner.Cellc(["--version"], null, folder.Path);
        var startUpMs = (int)clock.ElapsedMilliseconds;
        var latestKillMs = startUpMs + Math.Max(100, (wholeRunMs - startUpMs) / moments);

        var output = folder.File("results.jsonl");
        var random = new Random(2026); // fixed seed: the same 20 moments in every run of the test
        var kills = 0;
        for (var attempt = 0; attempt < moments; attempt++)
        {
            using var process = Start(folder.Path, ["check", population, "--out", output, "--no-cache", "--jobs", "2", .. attempt == 0 ? Array.Empty<string>() : ["--resume"]]);
            // Anywhere from start-up (settings, truncation, reading the earlier records) to mid-run, but
            // at the latest once this run has added a small share of the records: however fast the
            // machine, the twenty kills then spread over the whole population.
            var before = LineCount(output);
            var deadline = Stopwatch.StartNew();
            var waitMs = random.Next(Math.Min(100, latestKillMs), latestKillMs + 1);
            while (deadline.ElapsedMilliseconds < waitMs && !process.HasExited && LineCount(output) - before < size / (2 * moments))
                Thread.Sleep(5);
            if (process.HasExited) break;
            process.Kill(entireProcessTree: true); // SIGKILL
            process.WaitForExit();
            kills++;
        }
        Assert.True(kills >= moments / 2, $"only {kills} runs could be killed before the population was done; use a larger population");
        var final = ProcessRunner.Cellc(["check", population, "--out", output, "--resume", "--no-cache", "--jobs", "2"], null, folder.Path);
        Assert.True(final.ExitCode is 0 or 1, final.Stderr);
        var text = File.ReadAllText(output);
        Assert.EndsWith("\n", text);
        var records = Records(text);
        var ids = records.Select(r => r.GetProperty("id").GetString()!).ToList();
        Assert.Equal(size, ids.Distinct().Count());
        Assert.Equal(size, ids.Count);
        SameRecords(reference, records);
        // Progress counts the earlier records too and never passes the total.
        Assert.Contains($"{size:N0}/{size:N0} done", final.Stderr);
        foreach (System.Text.RegularExpressions.Match m in System.Text.RegularExpressions.Regex.Matches(final.Stderr, @"([0-9,]+)/([0-9,]+) done"))
            Assert.True(long.Parse(m.Groups[1].Value.Replace(",", "")) <= long.Parse(m.Groups[2].Value.Replace(",", "")), m.Value);
        // Nothing of the killed runs is left beside the results but the settings file.
        Assert.Equal(["pop.jsonl", "results.jsonl", "results.jsonl.settings"], Directory.GetFileSystemEntries(folder.Path).Select(System.IO.Path.GetFileName).Order());
    }

    [Fact]
    public async Task Three_concurrent_processes_on_one_cache_lose_nothing_and_agree_with_a_run_without_cache()
    {
        using var folder = new TempFolder();
        var population = folder.Write("pop.jsonl", Population(40, 21_000));
        var reference = Records(ProcessRunner.Cellc(["check", population, "--json", "--no-cache"], null, folder.Path).Stdout);
        var cache = folder.File("shared.db");
        var processes = Enumerable.Range(0, 3).Select(_ => Start(folder.Path, "check", population, "--json", "--cache", cache, "--jobs", "1")).ToList();
        var outputs = processes.Select(p => (Out: p.StandardOutput.ReadToEndAsync(), Err: p.StandardError.ReadToEndAsync())).ToList();
        foreach (var (process, (stdout, stderr)) in processes.Zip(outputs))
        {
            var (text, errors) = (await stdout, await stderr);
            await process.WaitForExitAsync();
            Assert.True(process.ExitCode is 0 or 1, errors);
            Assert.DoesNotContain("locked", errors);
            Assert.DoesNotContain("warning", errors);
            SameRecords(reference, Records(text));
        }
        // Every compiled network is in the cache now, whole: a fourth run is answered from it with the same records.
        var again = Records(ProcessRunner.Cellc(["check", population, "--json", "--cache", cache], null, folder.Path).Stdout);
        SameRecords(reference, again);
        Assert.All(again.Where(r => r.GetProperty("params").ValueKind == JsonValueKind.Number), r => Assert.True(r.GetProperty("cached").GetBoolean()));
    }

    [Fact]
    public void A_corrupted_cache_gives_one_warning_and_the_same_verdicts()
    {
        using var folder = new TempFolder();
        var population = folder.Write("pop.jsonl", Population(12, 22_000));
        var reference = ProcessRunner.Cellc(["check", population, "--json", "--no-cache"], null, folder.Path);
        var cache = folder.File("c.db");
        ProcessRunner.Cellc(["check", population, "--json", "--cache", cache], null, folder.Path);
        // Checkpoint the write-ahead log into the file, then overwrite every page after the first with garbage.
        ProcessRunner.Run("python3", ["-c", $"import sqlite3; c=sqlite3.connect('{cache}'); c.execute('PRAGMA wal_checkpoint(TRUNCATE)'); c.close()"]);
        var bytes = File.ReadAllBytes(cache);
        Assert.True(bytes.Length > 4096, $"the cache holds {bytes.Length} bytes");
        new Random(3).NextBytes(bytes.AsSpan(4096));
        File.WriteAllBytes(cache, bytes);

        var result = ProcessRunner.Cellc(["check", population, "--json", "--cache", cache], null, folder.Path);
        Assert.Equal(reference.ExitCode, result.ExitCode);
        SameRecords(Records(reference.Stdout), Records(result.Stdout));
        var warnings = result.Stderr.Split('\n').Where(l => l.Contains("warning", StringComparison.Ordinal)).ToList();
        Assert.Single(warnings);
        Assert.Contains(cache, warnings[0]);
        Assert.Contains("without the cache", warnings[0]);
    }

    [Fact]
    public void A_full_disk_under_the_cache_never_changes_a_verdict_and_a_full_disk_under_out_is_a_clear_error()
    {
        using var folder = new TempFolder();
        var population = folder.Write("pop.jsonl", Population(30, 23_000));
        var reference = ProcessRunner.Cellc(["check", population, "--json", "--no-cache"], null, folder.Path);
        using (var disk = new Mount(folder.Path, "size=64k"))
        {
            // The cache's file fills the disk after a few entries.
            var result = ProcessRunner.Cellc(["check", population, "--json", "--cache", System.IO.Path.Combine(disk.Path, "c.db")], null, folder.Path);
            Assert.Equal(reference.ExitCode, result.ExitCode);
            SameRecords(Records(reference.Stdout), Records(result.Stdout));
            Assert.Single(result.Stderr.Split('\n'), l => l.Contains("warning", StringComparison.Ordinal));
            Assert.DoesNotContain("internal error", result.Stdout);

            // Results on a full disk: exit 2 with the file named, no stack trace; what was written are whole records and resumes.
            foreach (var file in Directory.GetFiles(disk.Path)) File.Delete(file);
            File.WriteAllBytes(System.IO.Path.Combine(disk.Path, "filler"), new byte[56_000]);
            var output = System.IO.Path.Combine(disk.Path, "r.jsonl");
            var full = ProcessRunner.Cellc(["check", population, "--out", output, "--no-cache"], null, folder.Path);
            Assert.Equal(2, full.ExitCode);
            Assert.DoesNotContain("   at ", full.Stderr);
            Assert.Contains("cellc: error:", full.Stderr);
        }
    }

    [Fact]
    public void A_read_only_folder_is_a_warning_for_the_cache_and_a_clear_error_for_out()
    {
        using var folder = new TempFolder();
        var population = folder.Write("pop.jsonl", Population(6, 24_000));
        var reference = ProcessRunner.Cellc(["check", population, "--json", "--no-cache"], null, folder.Path);
        using var readOnly = new Mount(folder.Path, "ro,size=64k");
        var cached = ProcessRunner.Cellc(["check", population, "--json", "--cache", System.IO.Path.Combine(readOnly.Path, "c.db")], null, folder.Path);
        Assert.Equal(reference.ExitCode, cached.ExitCode);
        SameRecords(Records(reference.Stdout), Records(cached.Stdout));
        Assert.Contains("without the cache", cached.Stderr);

        var output = ProcessRunner.Cellc(["check", population, "--out", System.IO.Path.Combine(readOnly.Path, "r.jsonl"), "--no-cache"], null, folder.Path);
        Assert.Equal(2, output.ExitCode);
        Assert.Contains("r.jsonl", output.Stderr);
        Assert.DoesNotContain("   at ", output.Stderr);
    }

    [Fact]
    public void Repeated_ids_are_warned_about_naming_both_lines_each_line_is_checked_and_resume_is_refused_up_front()
    {
        using var folder = new TempFolder();
        var population = folder.Write("pop.jsonl", Population(6, 25_000, seed => seed % 3 == 0 ? "twin" : $"c{seed}"));
        var lines = File.ReadAllLines(population).Select((l, i) => (l, i + 1)).Where(p => p.l.Contains("\"twin\"")).Select(p => p.Item2).ToList();
        Assert.Equal(2, lines.Count);
        var output = folder.File("r.jsonl");
        var run = ProcessRunner.Cellc(["check", population, "--out", output, "--no-cache"], null, folder.Path);
        Assert.Contains($"the id 'twin' at {population}:{lines[1]} was already used at {population}:{lines[0]}", run.Stderr);
        Assert.Equal(6, Records(File.ReadAllText(output)).Count);

        var resumed = ProcessRunner.Cellc(["check", population, "--out", output, "--resume", "--no-cache"], null, folder.Path);
        Assert.Equal(2, resumed.ExitCode);
        Assert.Contains($"{population}:{lines[1]} was already used at {population}:{lines[0]}", resumed.Stderr);
    }

    [Fact]
    public void Resume_refuses_a_population_whose_content_changed()
    {
        using var folder = new TempFolder();
        var population = folder.Write("pop.jsonl", Population(4, 26_000));
        var output = folder.File("r.jsonl");
        ProcessRunner.Cellc(["check", population, "--out", output, "--no-cache"], null, folder.Path);
        var settings = JsonDocument.Parse(File.ReadAllText(output + ".settings")).RootElement;
        // The settings are JSON with stable names (issue 8).
        Assert.Equal("cellc-check-settings/1", settings.GetProperty("format").GetString());
        Assert.Matches("^[0-9a-f]{64}$", settings.GetProperty("inputs")[0].GetProperty("sha256").GetString());
        File.WriteAllText(population, Population(4, 26_100));
        var before = File.ReadAllText(output);
        var resumed = ProcessRunner.Cellc(["check", population, "--out", output, "--resume", "--no-cache"], null, folder.Path);
        Assert.Equal(2, resumed.ExitCode);
        Assert.Contains("population changed", resumed.Stderr);
        Assert.Equal(before, File.ReadAllText(output));
    }

    [Fact]
    public void Closed_standard_streams_and_endless_inputs_are_plain_errors()
    {
        using var folder = new TempFolder();
        var population = folder.Write("pop.jsonl", Population(2, 27_000));
        var closedIn = ProcessRunner.Run("bash", ["-c", $"dotnet {RepoPaths.CliDll} check - --no-cache <&-"], timeout: TimeSpan.FromMinutes(1));
        Assert.Equal(2, closedIn.ExitCode);
        Assert.Contains("standard input is closed", closedIn.Stderr);
        var closedOut = ProcessRunner.Run("bash", ["-c", $"dotnet {RepoPaths.CliDll} check {population} --no-cache >&-"], timeout: TimeSpan.FromMinutes(1));
        Assert.Equal(2, closedOut.ExitCode);
        Assert.Contains("cannot write to standard output", closedOut.Stderr);
        Assert.DoesNotContain("   at ", closedOut.Stderr);
        // A device without end: read up to the 1 MiB limit of a genotype, then refused.
        var zero = ProcessRunner.Cellc(["check", "/dev/zero", "--no-cache"], null, folder.Path);
        Assert.Equal(2, zero.ExitCode);
        Assert.Contains("/dev/zero", zero.Stderr);
        // An endless line on standard input: refused at 64 MiB without a line break.
        var endless = ProcessRunner.Run("bash", ["-c", $"head -c 80000000 /dev/zero | dotnet {RepoPaths.CliDll} check - --no-cache"], timeout: TimeSpan.FromMinutes(1));
        Assert.Equal(2, endless.ExitCode);
        Assert.Contains("without a line break", endless.Stderr);
    }

    [Fact]
    public void Terminal_escapes_are_never_printed_raw_and_ids_with_control_characters_are_refused()
    {
        using var folder = new TempFolder();
        var evil = "{\"id\":\"a\\u001b]0;owned\\u0007\"," + RandomGenotypes.Json(28_000, maxLevels: 1, maxNodes: 3)[1..];
        var bad = "{\"id\":\"b\",\"format\":\"genotype/1\",\"levels\":[{\"nodes\":2,\"motifs\":{\"cell\":{\"edges\":[[0,1,\"\\u001b[2Jconv\"]]}}}]}";
        var population = folder.Write("pop.jsonl", evil + "\n" + bad + "\n");
        var table = ProcessRunner.Cellc(["check", population, "--no-cache", "--ordered"], null, folder.Path);
        Assert.DoesNotContain("\u001b", table.Stdout);
        Assert.DoesNotContain("\u001b", table.Stderr);
        Assert.Contains("\\e[2Jconv", table.Stdout);
        var records = Records(ProcessRunner.Cellc(["check", population, "--no-cache", "--json", "--ordered"], null, folder.Path).Stdout);
        // The id with control characters is refused: the line is invalid under its default id.
        Assert.Equal(["line-1", "b"], records.Select(r => r.GetProperty("id").GetString()));
        Assert.Equal("invalid", records[0].GetProperty("status").GetString());
        Assert.Contains("control characters", records[0].GetProperty("reason").GetString());
    }

    [Fact]
    public void Temporary_files_of_killed_runs_are_removed_and_live_ones_kept()
    {
        using var folder = new TempFolder();
        var shard = folder.Write("s.jsonl", "{\"id\":\"a\",\"status\":\"ok\"}\n");
        // A process id that no process has (above Linux's pid_max) and this test's own, which runs.
        var stale = folder.Write(".merged.jsonl.99999999.tmp", new string('x', 1000));
        var live = folder.Write($".merged.jsonl.{Environment.ProcessId}.tmp", "mine");
        var merge = ProcessRunner.Cellc(["merge", folder.File("merged.jsonl"), shard], null, folder.Path);
        Assert.Equal(0, merge.ExitCode);
        Assert.False(File.Exists(stale));
        Assert.True(File.Exists(live));
    }

    [Fact]
    public void Huge_candidates_within_the_limits_are_bounded_by_nodes_and_by_the_memory_guard()
    {
        using var folder = new TempFolder();
        var genotype = folder.Write("g.json", RandomGenotypes.Json(29_000, maxLevels: 2, maxNodes: 4));
        var nodes = Records(ProcessRunner.Cellc(["check", genotype, "--json", "--no-cache", "--max-run-nodes", "5"], null, folder.Path).Stdout).Single();
        Assert.Equal("over_budget", nodes.GetProperty("status").GetString());
        Assert.Equal("too large to run here", nodes.GetProperty("reason_kind").GetString());
        Assert.Contains("--max-run-nodes", nodes.GetProperty("reason").GetString());
        Assert.True(nodes.GetProperty("params").GetInt64() > 0);
        var memory = Records(ProcessRunner.Cellc(["check", genotype, "--json", "--no-cache", "--memory-limit-gb", "0.0001"], null, folder.Path).Stdout).Single();
        Assert.Equal("over_budget", memory.GetProperty("status").GetString());
        Assert.Contains("--memory-limit-gb", memory.GetProperty("reason").GetString());
        var normal = Records(ProcessRunner.Cellc(["check", genotype, "--json", "--no-cache"], null, folder.Path).Stdout).Single();
        Assert.NotEqual("too large to run here", normal.GetProperty("reason_kind").ValueKind == JsonValueKind.String ? normal.GetProperty("reason_kind").GetString() : null);
    }

    [Theory]
    [InlineData("--opset", "abc")]
    [InlineData("--train-batch", "1e3")]
    [InlineData("--jobs", "two")]
    [InlineData("--runs", "1.5")]
    [InlineData("--seed", "0x10")]
    public void A_non_integer_option_is_exit_2_without_a_stack_trace(string option, string value)
    {
        var result = ProcessRunner.Cellc("check", RepoPaths.Fixture("tidepool-h3.json"), option, value, "--no-cache");
        Assert.Equal(2, result.ExitCode);
        Assert.Contains(option, result.Stderr);
        Assert.DoesNotContain("   at ", result.Stderr);
        Assert.DoesNotContain("Exception", result.Stderr);
    }

    [Fact]
    public void Number_suffixes_are_unambiguous_and_hints_fit_the_unit()
    {
        var milli = ProcessRunner.Cellc("check", RepoPaths.Fixture("tidepool-h3.json"), "--max-params", "5m", "--no-cache");
        Assert.Equal(2, milli.ExitCode);
        Assert.Contains("milli or mega", milli.Stderr);
        var ms = ProcessRunner.Cellc("check", RepoPaths.Fixture("tidepool-h3.json"), "--max-latency-ms", "5ms", "--no-cache");
        Assert.Equal(2, ms.ExitCode);
        Assert.Contains("already in ms", ms.Stderr);
        Assert.DoesNotContain("250k", ms.Stderr);
    }

    [Fact]
    public void Several_files_and_a_folder_of_genotype_files_are_checked_and_a_pretty_printed_genotype_on_stdin_gets_a_hint()
    {
        using var folder = new TempFolder();
        var dir = Directory.CreateDirectory(folder.File("gdir")).FullName;
        File.Copy(RepoPaths.Fixture("tidepool-h3.json"), Path.Combine(dir, "a.json"));
        File.Copy(RepoPaths.Fixture("tidepool-flat11.json"), Path.Combine(dir, "b.json"));
        File.WriteAllText(Path.Combine(dir, "notes.txt"), "not a genotype");
        var both = Records(ProcessRunner.Cellc(["check", Path.Combine(dir, "a.json"), Path.Combine(dir, "b.json"), "--json", "--ordered", "--no-cache"], null, folder.Path).Stdout);
        var fromFolder = Records(ProcessRunner.Cellc(["check", dir, "--json", "--ordered", "--no-cache"], null, folder.Path).Stdout);
        Assert.Equal(["tidepool-h3", "tidepool-flat11"], both.Select(r => r.GetProperty("id").GetString()));
        SameRecords(both, fromFolder);

        var pretty = JsonSerializer.Serialize(JsonDocument.Parse(File.ReadAllText(RepoPaths.Fixture("tidepool-flat11.json"))).RootElement, new JsonSerializerOptions { WriteIndented = true });
        var piped = Records(ProcessRunner.Cellc(["check", "-", "--json", "--no-cache"], pretty, folder.Path).Stdout);
        Assert.All(piped, r => Assert.Equal("invalid", r.GetProperty("status").GetString()));
        Assert.Contains("JSON Lines needs each genotype as one whole object on one line", piped[0].GetProperty("reason").GetString());
    }

    [Fact]
    public void Bench_refuses_an_overflowing_batch_up_front_and_leaves_no_profile_file()
    {
        using var folder = new TempFolder();
        var big = ProcessRunner.Cellc(["bench", RepoPaths.Fixture("tidepool-h3.json"), "--skeleton", "full224", "--batch", "20000", "--runs", "1", "--warmup", "0"], null, folder.Path);
        Assert.Equal(2, big.ExitCode);
        Assert.Contains("--batch", big.Stderr);
        Assert.DoesNotContain("Exception", big.Stderr);
        var breakdown = ProcessRunner.Cellc(["bench", RepoPaths.Fixture("tidepool-h3.json"), "--breakdown", "--runs", "3", "--warmup", "1"], null, folder.Path);
        Assert.Equal(0, breakdown.ExitCode);
        Assert.Empty(Directory.GetFileSystemEntries(folder.Path));
    }
}
