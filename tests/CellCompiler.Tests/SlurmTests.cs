using System.Net;
using System.Net.Sockets;
using System.Text.Json.Nodes;
using CellCompiler.Tests.Support;

namespace CellCompiler.Tests;

/// <summary>
/// The README's cluster example on a real scheduler (issue 10, section 4): a single-node Slurm
/// (Debian's slurm-wlm and munge) started by scripts/slurm/single-node.sh, the job-array script
/// scripts/slurm/screen-array.sbatch submitted with sbatch as three array tasks, each running the
/// installed `cellc check --shard K/3`, then the README's `cellc merge`. The merged file must equal
/// a single-process run: the same ids exactly once, the same statuses, reasons and figures.
/// Needs root (CI runs as root); a missing Slurm or munge fails the test.
/// </summary>
[Collection(PackagedCellc.Collection)]
[System.Runtime.Versioning.SupportedOSPlatform("linux")]
public sealed class SlurmTests(PackagedCellc cellc)
{
    private static readonly string SlurmScripts = Path.Combine(RepoPaths.Root, "scripts", "slurm");
    private static readonly string ArrayScript = Path.Combine(SlurmScripts, "screen-array.sbatch");

    /// <summary>Fields that differ between two correct runs: time spent, and whether the cache answered.</summary>
    private static readonly string[] RunDependent = ["check_ms", "cached"];

    /// <summary>The installed tool first on PATH, as after the README's install step (tasks inherit sbatch's environment).</summary>
    private string PathWithTool => $"PATH={cellc.ToolPath}:{Environment.GetEnvironmentVariable("PATH")}";

    [Fact]
    public void The_README_shows_the_array_script_that_this_test_submits()
    {
        var readme = File.ReadAllText(Path.Combine(RepoPaths.Root, "README.md"));
        var script = File.ReadAllText(ArrayScript).TrimEnd();
        Assert.Contains(script, readme);
    }

    [Fact]
    public void Three_array_tasks_and_a_merge_give_the_single_process_result()
    {
        using var work = new TempFolder();
        // munged wants every folder above its socket searchable by all (the temporary folder is private).
        File.SetUnixFileMode(work.Path, (UnixFileMode)0b111_101_101);
        var job = Directory.CreateDirectory(work.File("job")).FullName;
        var population = Path.Combine(job, "population-gen12.jsonl");
        WritePopulation(population);
        var expectedIds = Ids(File.ReadLines(population).Where(l => l.Trim().Length > 0).Select(l => JsonNode.Parse(l)!));

        var slurm = work.File("slurm");
        var conf = Path.Combine(slurm, "slurm.conf");
        try
        {
            var (ctldPort, slurmdPort) = (FreePort(), FreePort());
            var start = ProcessRunner.Run("bash", [Path.Combine(SlurmScripts, "single-node.sh"), "start", slurm, ctldPort, slurmdPort],
                timeout: TimeSpan.FromMinutes(2));
            Assert.True(start.ExitCode == 0, $"Slurm did not start:\n{start.Stdout}\n{start.Stderr}");

            // The README's script, adapted to this 2-CPU node: 3 tasks of 1 CPU instead of 16 of 4, and
            // 1 GB each instead of 8 (a node with less memory than a request refuses the job).
            // sbatch's options override the script's #SBATCH lines; --wait returns when every task has ended.
            var environment = new[]
            {
                $"SLURM_CONF={conf}", PathWithTool, $"TMPDIR={job}",
            };
            var sbatch = ProcessRunner.Run("env",
                [.. environment, "sbatch", "--wait", "--array=0-2", "--cpus-per-task=1", "--mem=1G", $"--chdir={job}", ArrayScript],
                timeout: TimeSpan.FromMinutes(5));
            Assert.True(sbatch.ExitCode == 0, $"sbatch --wait failed (exit {sbatch.ExitCode}):\n{sbatch.Stdout}\n{sbatch.Stderr}\n{TaskLogs(job, slurm)}");
            var jobId = sbatch.Stdout.Split(' ', StringSplitOptions.RemoveEmptyEntries).Last().Trim();

            // Slurm ran them: one output file per array task (sbatch's default name slurm-JOB_TASK.out).
            Assert.Equal(
                new[] { $"slurm-{jobId}_0.out", $"slurm-{jobId}_1.out", $"slurm-{jobId}_2.out" },
                Directory.GetFiles(job, "slurm-*.out").Select(Path.GetFileName).Order(StringComparer.Ordinal));
        }
        finally
        {
            var stop = ProcessRunner.Run("bash", [Path.Combine(SlurmScripts, "single-node.sh"), "stop", slurm], timeout: TimeSpan.FromMinutes(2));
            Assert.True(stop.ExitCode == 0, $"Slurm did not stop cleanly:\n{stop.Stdout}\n{stop.Stderr}");
            Assert.False(Directory.Exists(slurm), "the cluster's state folder was left behind");
        }

        // Each task checked its own part, and the parts cover the population exactly once.
        var shards = Enumerable.Range(0, 3).Select(k => Records(Path.Combine(job, "results", $"shard-{k}.jsonl"))).ToList();
        Assert.All(shards, shard => Assert.NotEmpty(shard));
        Assert.Equal(expectedIds, Ids(shards.SelectMany(s => s)).Order(StringComparer.Ordinal).ToList());

        // The README's merge command, as written there.
        var merge = ProcessRunner.Run("env",
            [PathWithTool, "bash", "-c", "cellc merge results.jsonl results/shard-*.jsonl --population population-gen12.jsonl"],
            workingDirectory: job, timeout: TimeSpan.FromMinutes(2));
        Assert.True(merge.ExitCode == 0, $"merge reported problems (exit {merge.ExitCode}):\n{merge.Stdout}\n{merge.Stderr}");
        var merged = Records(Path.Combine(job, "results.jsonl"));

        // The same population in one process (the ordinary build, no cache), with the script's options
        // (the population named as the script names it: an invalid line's reason starts with that name).
        var single = ProcessRunner.Cellc(
            ["check", "population-gen12.jsonl", "--skeleton", "proxy", "--max-params", "5M", "--out", work.File("single.jsonl"), "--no-cache"], null, job);
        Assert.True(single.ExitCode is 0 or 1, $"single-process check failed (exit {single.ExitCode}):\n{single.Stderr}");
        var reference = Records(work.File("single.jsonl"));

        Assert.Equal(expectedIds.Count, merged.Count);
        Assert.Equal(expectedIds, Ids(merged)); // population order, each id once
        var byId = reference.ToDictionary(r => (string)r["id"]!);
        Assert.Equal(expectedIds.Count, byId.Count);
        foreach (var record in merged)
        {
            var id = (string)record["id"]!;
            Assert.True(JsonNode.DeepEquals(WithoutRunDependent(byId[id]), WithoutRunDependent(record)),
                $"{id}: merged {record.ToJsonString()}\n single {byId[id].ToJsonString()}");
        }
        // Not a vacuous comparison: the population has working, broken and invalid candidates.
        var statuses = merged.Select(r => (string)r["status"]!).ToHashSet();
        Assert.Superset(new HashSet<string> { "ok", "broken", "invalid" }, statuses);
    }

    /// <summary>The fixture population (working, dead and invalid candidates) plus 20 sampled ones.</summary>
    private static void WritePopulation(string path)
    {
        var sample = ProcessRunner.Cellc("sample", "--levels", "3,3", "--motifs", "2,1", "--count", "20", "--seed", "12");
        Assert.Equal(0, sample.ExitCode);
        File.WriteAllText(path, File.ReadAllText(RepoPaths.Fixture("tidepool-population.jsonl")).TrimEnd() + "\n" + sample.Stdout);
    }

    private static List<JsonNode> Records(string path) =>
        File.ReadLines(path).Where(l => l.Trim().Length > 0).Select(l => JsonNode.Parse(l)!).ToList();

    private static List<string> Ids(IEnumerable<JsonNode> records) => records.Select(r => (string)r["id"]!).ToList();

    private static JsonNode WithoutRunDependent(JsonNode record)
    {
        var copy = record.DeepClone().AsObject();
        foreach (var field in RunDependent) copy.Remove(field);
        return copy;
    }

    private static string FreePort()
    {
        var listener = new TcpListener(IPAddress.Loopback, 0);
        listener.Start();
        var port = ((IPEndPoint)listener.LocalEndpoint).Port;
        listener.Stop();
        return port.ToString(System.Globalization.CultureInfo.InvariantCulture);
    }

    private static string TaskLogs(string job, string slurm)
    {
        var files = Directory.GetFiles(job, "slurm-*.out")
            .Concat(Directory.Exists(Path.Combine(slurm, "log")) ? Directory.GetFiles(Path.Combine(slurm, "log")) : []);
        return string.Join("\n", files.Select(f => $"--- {f}\n{string.Join("\n", File.ReadLines(f).TakeLast(30))}"));
    }
}
