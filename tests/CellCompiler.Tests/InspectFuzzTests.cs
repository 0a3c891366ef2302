using System.Diagnostics;
using System.Text.Json;
using CellCompiler.Cli.Commands;
using CellCompiler.Input;
using CellCompiler.Inspection;
using CellCompiler.Runtime;
using CellCompiler.Tests.Support;
using Google.Protobuf;
using Xunit.Abstractions;

namespace CellCompiler.Tests;

/// <summary>
/// `cellc inspect` on corrupted, truncated and crafted ONNX files (issue 10): every file is either
/// inspected (and printed safely) or refused as bad input naming the file; never a crash, a hang
/// or unbounded memory. Every file inspect accepts then goes to `bench` (batch 1, one timed run)
/// under the same standard: measured, or refused naming the file. The mutated corpus runs a
/// fixed-seed slice here; scripts/inspect-fuzz.sh runs a longer one, every case also through the
/// real process (see the README).
/// </summary>
public sealed class InspectFuzzTests(ITestOutputHelper output)
{
    /// <summary>Cases in the corpus: a few hundred in CI, more on demand (CELLC_INSPECT_FUZZ_CASES).</summary>
    private static int Cases => EnvInt("CELLC_INSPECT_FUZZ_CASES", 400);

    private static int Seed => EnvInt("CELLC_INSPECT_FUZZ_SEED", 1);

    /// <summary>On demand (CELLC_INSPECT_FUZZ_CLI=1): every case also through the cellc process, with its heap capped.</summary>
    private static bool ThroughCli => Environment.GetEnvironmentVariable("CELLC_INSPECT_FUZZ_CLI") == "1";

    /// <summary>A case that has not finished by then is reported as a hang (a guard, not a speed target).</summary>
    private static readonly TimeSpan HangGuard = TimeSpan.FromSeconds(60);

    private static int EnvInt(string name, int fallback) =>
        int.TryParse(Environment.GetEnvironmentVariable(name), out var n) && n > 0 ? n : fallback;

    [Fact]
    public void A_fixed_seed_corpus_of_mutated_models_is_inspected_or_refused_never_crashes()
    {
        using var folder = new TempFolder();
        var failures = new List<string>();
        var (inspected, refused, benched, benchRefused) = (0, 0, 0, 0);
        var kinds = new HashSet<string>();
        var refusals = new Dictionary<string, int>(StringComparer.Ordinal);
        var benchRefusals = new Dictionary<string, int>(StringComparer.Ordinal);
        var pending = new List<(string Description, string Path, Outcome Outcome, Outcome? Bench)>();
        var benchTime = Stopwatch.StartNew();
        benchTime.Stop();
        for (var index = 0; index < Cases; index++)
        {
            var (description, bytes) = InspectMutations.Case(Seed, index);
            foreach (var kind in InspectMutations.Kinds.Where(k => description.Contains(k, StringComparison.Ordinal))) kinds.Add(kind);
            var path = folder.File($"fuzz-{index}.onnx");
            File.WriteAllBytes(path, bytes);
            var outcome = InspectInProcess(path);
            Outcome? bench = null;
            if (outcome.Result == Result.Accepted)
            {
                inspected++;
                benchTime.Start();
                bench = BenchInProcess(path);
                benchTime.Stop();
                if (bench.Result == Result.Accepted) benched++;
                else if (bench.Result == Result.Refused) { benchRefused++; Tally(benchRefusals, bench, path); }
                else failures.Add($"{description}: bench: {bench.Failure}");
            }
            else if (outcome.Result == Result.Refused)
            {
                refused++;
                Tally(refusals, outcome, path);
            }
            else failures.Add($"{description}: {outcome.Failure}");
            if (ThroughCli) pending.Add((description, path, outcome, bench));
            else File.Delete(path);
            if (pending.Count >= 64 || (index == Cases - 1 && pending.Count > 0))
            {
                // The processes run a few at a time; each checks its exit code and message against the in-process outcome.
                Parallel.ForEach(pending, new ParallelOptions { MaxDegreeOfParallelism = Environment.ProcessorCount }, p =>
                {
                    if (ThroughCliProcess(["inspect", p.Path], p.Path, p.Outcome) is { } cliFailure)
                        lock (failures) failures.Add($"{p.Description}: cellc process: {cliFailure}");
                    if (p.Bench is { } b && ThroughCliProcess(["bench", p.Path, "--warmup", "0", "--runs", "1"], p.Path, b) is { } benchFailure)
                        lock (failures) failures.Add($"{p.Description}: cellc bench process: {benchFailure}");
                    File.Delete(p.Path);
                });
                pending.Clear();
            }
        }
        output.WriteLine($"seed {Seed}: {Cases} cases, {inspected} inspected, {refused} refused; of the inspected, {benched} benched, " +
                         $"{benchRefused} refused by bench ({benchTime.Elapsed.TotalSeconds:F1} s); {failures.Count} failed" +
                         (ThroughCli ? " (each also through the cellc process)" : ""));
        foreach (var (message, count) in refusals.OrderByDescending(kv => kv.Value).Take(12))
            output.WriteLine($"  {count,5} refused: {message}");
        foreach (var (message, count) in benchRefusals.OrderByDescending(kv => kv.Value).Take(12))
            output.WriteLine($"  {count,5} refused by bench: {message}");
        Assert.True(failures.Count == 0, $"{failures.Count} of {Cases} cases failed:\n" + string.Join("\n", failures.Take(20)));
        // Every mutation kind was drawn, and the corpus is neither all garbage nor all harmless.
        Assert.Equal(InspectMutations.Kinds.Order(StringComparer.Ordinal), kinds.Order(StringComparer.Ordinal));
        Assert.True(inspected >= Cases / 20 && refused >= Cases / 20, $"{inspected} inspected, {refused} refused");
        // Bench both runs and refuses some of what inspect accepts.
        Assert.True(benched >= Cases / 40 && benchRefused >= Cases / 400, $"{benched} benched, {benchRefused} refused by bench");
    }

    /// <summary>Tallied by the message without the file name and numbers, to show what kinds of refusal the corpus reaches.</summary>
    private static void Tally(Dictionary<string, int> tally, Outcome outcome, string path)
    {
        var kind = System.Text.RegularExpressions.Regex.Replace(outcome.Message[(path.Length + 2)..], "[0-9][0-9,]*", "N");
        if (kind.Length > 160) kind = kind[..160] + "...";
        tally[kind] = tally.GetValueOrDefault(kind) + 1;
    }

    public static TheoryData<string> CraftedNames() => new(InspectMutations.Crafted().Keys);

    [Theory]
    [MemberData(nameof(CraftedNames))]
    public void Crafted_hostile_models_are_inspected_or_refused_as_bad_input(string name)
    {
        using var folder = new TempFolder();
        var path = folder.File($"{name}.onnx");
        File.WriteAllBytes(path, InspectMutations.Crafted()[name].ToByteArray());
        var outcome = InspectInProcess(path);
        Assert.True(outcome.Failure is null, outcome.Failure);
        // What each one must give (derived by hand from how it was built).
        switch (name)
        {
            case "initializer-elements-overflow" or "negative-initializer-dim":
                Assert.Equal(Result.Refused, outcome.Result);
                Assert.Contains("which is not a valid tensor size", outcome.Message, StringComparison.Ordinal);
                break;
            case "huge-dims-without-data":
                // 2^62 weights counted from the dims, never allocated.
                Assert.True(ModelInspector.InspectFile(path).Params > 1L << 62);
                break;
            case "value-info-of-rank-100000" or "extreme-shape-arithmetic" or "cycles-and-forward-references":
                // The hostile parts are beside the network: its figures stand.
                Assert.Equal(InspectGraphs.ChannelShuffleMacs, ModelInspector.InspectFile(path).Macs);
                break;
            case "unsqueeze-chain-growing-rank":
            {
                var inspection = ModelInspector.InspectFile(path);
                Assert.Equal(InspectGraphs.ChannelShuffleMacs, inspection.Macs);
                // The first Unsqueeze makes rank 68, above the 64 cellc follows; the rest inherit that place.
                var source = Assert.Single(inspection.UnknownShapeSources);
                Assert.Equal("grow0", source.Gap.Node);
                Assert.Equal(2_000, source.Tensors);
                break;
            }
            case "subgraphs-30-deep":
            {
                var inspection = ModelInspector.InspectFile(path);
                Assert.Equal(1, inspection.NodeCount);
                Assert.Equal(29, inspection.SubgraphNodes);
                break;
            }
            case "escape-sequences-and-long-text":
            {
                var text = new StringWriter();
                InspectCommand.WriteText(text, ModelInspector.InspectFile(path), path);
                var lines = text.ToString().Split('\n');
                // 3,000 metadata entries and a 100,000-character producer keep the summary short and inside its width.
                Assert.InRange(lines.Length, 20, 200);
                Assert.All(lines, line => Assert.True(line.Length <= 100 || line.StartsWith(path, StringComparison.Ordinal), line));
                Assert.Contains(lines, l => l.Contains("... and 2,960 more metadata entries (see --json)", StringComparison.Ordinal));
                break;
            }
        }
    }

    [Fact]
    public async Task Reading_a_pipe_stops_at_the_size_limit_while_reading()
    {
        using var folder = new TempFolder();
        var pipe = new EndlessProtobufPipe(folder, "endless.onnx");
        var fifo = pipe.Path;
        const long limit = 4 << 20;
        var e = Assert.Throws<InputException>(() => ModelFileReader.Read(fifo, limit));
        Assert.Equal($"{fifo}: the input goes on past 4,194,304 bytes, where reading stopped; the limit is 4,194,304 bytes", e.Message);
        await pipe.Writer.WaitAsync(HangGuard);   // a TimeoutException if the writer never saw the pipe close
        // The reader stopped at its limit: the writer got no further than the limit and the pipe's buffer.
        Assert.InRange(pipe.Written, limit, limit + (4 << 20));
    }

    public static TheoryData<string> HostileFiles() => new(["dev-zero", "empty", "json", "truncated", "huge-length", "nested-120", "folder", "missing"]);

    [Theory]
    [MemberData(nameof(HostileFiles))]
    public void Cli_inspect_of_a_hostile_file_exits_2_naming_it_without_a_stack_trace(string kind)
    {
        using var folder = new TempFolder();
        var seed = InspectMutations.Seeds[0];
        var path = kind switch
        {
            "dev-zero" => "/dev/zero",
            "folder" => folder.Path,
            "missing" => folder.File("missing.onnx"),
            _ => folder.File($"{kind}.onnx"),
        };
        if (kind is not ("dev-zero" or "folder" or "missing"))
            File.WriteAllBytes(path, kind switch
            {
                "empty" => [],
                "json" => "{\"format\": \"genotype/1\"}"u8.ToArray(),
                "truncated" => seed[..(seed.Length / 2)],
                "huge-length" => [.. seed, 0x3A, 0xFF, 0xFF, 0xFF, 0xFF, 0x07],   // a graph field claiming 2 GiB
                _ => InspectMutations.NestedGraphs(120).ToByteArray(),
            });
        var result = ProcessRunner.Cellc("inspect", path);
        Assert.Equal(2, result.ExitCode);
        Assert.StartsWith($"cellc: error: {path}: ", result.Stderr, StringComparison.Ordinal);
        Assert.DoesNotContain("   at ", result.Stderr, StringComparison.Ordinal);
        Assert.DoesNotContain("internal error", result.Stderr, StringComparison.Ordinal);
        Assert.Equal("", result.Stdout);
        var expected = kind switch
        {
            "dev-zero" => "not an ONNX model: the file is not a valid ONNX protobuf",
            "empty" => "the file is empty",
            "json" => "(it looks like JSON text; ONNX models are binary protobuf files)",
            "truncated" or "huge-length" => "not an ONNX model: the file is not a valid ONNX protobuf",
            "nested-120" => "too many levels of nesting",
            "folder" => "is a folder, not an ONNX model file",
            _ => "file not found",
        };
        Assert.Contains(expected, result.Stderr, StringComparison.Ordinal);
    }

    [Fact]
    public void Cli_inspect_of_a_model_with_escape_sequences_prints_them_escaped()
    {
        using var folder = new TempFolder();
        var path = folder.File("names.onnx");
        File.WriteAllBytes(path, InspectMutations.Crafted()["escape-sequences-and-long-text"].ToByteArray());
        var result = ProcessRunner.Cellc("inspect", path);
        Assert.True(result.ExitCode == 0, result.Stderr);
        Assert.DoesNotContain(result.Stdout, c => (char.IsControl(c) && c != '\n') || c is '\u202E' or '\u2066');
        Assert.Contains(@"\e]52;c;ZWNobyBvd25lZA==\u0007\e[2J\e[H\u202E\u2066", result.Stdout, StringComparison.Ordinal);
    }

    // ---- running one case ---------------------------------------------------------------------

    /// <summary>Accepted: inspected and printed, or benched.</summary>
    private enum Result { Accepted, Refused, Failed }

    /// <summary>Batch 1, no warm-up, one timed run (and the untimed first run that finds the output shapes).</summary>
    private static readonly LatencySettings FuzzLatency = new(Threads: 1, Warmup: 0, Runs: 1, MinSeconds: 0, Batches: [1]);

    /// <summary>What a bench may use: half of the process's 1 GiB heap cap, in-process as in the process, so both decide alike.</summary>
    private const long BenchMemory = 1L << 29;

    private sealed record Outcome(Result Result, string Message)
    {
        public string? Failure => Result == Result.Failed ? Message : null;

        public static Outcome Failed(string why) => new(Result.Failed, why);
    }

    /// <summary>The library and both printers, in-process; a case that does not finish is a hang.</summary>
    private static Outcome InspectInProcess(string path) => Classified(path, () =>
    {
        var inspection = ModelInspector.InspectFile(path);
        var text = new StringWriter();
        InspectCommand.WriteText(text, inspection, path);
        if (text.ToString().Any(c => (char.IsControl(c) && c != '\n') || c is >= '\u202A' and <= '\u202E'))
            return Outcome.Failed("the text output holds a control character");
        using var json = new MemoryStream();
        InspectionJson.Write(json, inspection, path);
        JsonDocument.Parse(json.ToArray()).Dispose();
        return new Outcome(Result.Accepted, "");
    });

    /// <summary>
    /// `bench` in-process through the path the CLI runs (<see cref="ModelBench"/>, then the latency
    /// meter): measured, or refused as bad input naming the file; a case that does not finish is a hang.
    /// </summary>
    private static Outcome BenchInProcess(string path) => Classified(path, () =>
    {
        var model = ModelBench.Read(path, FuzzLatency.BatchSizes, BenchMemory);
        var report = ModelBench.OnRuntime(path, () => LatencyMeter.Measure(model.Bytes, FuzzLatency));
        return report.Batches is [{ Batch: 1, Runs: 1 }]
            ? new Outcome(Result.Accepted, "")
            : Outcome.Failed($"measured {report.Batches.Count} batch sizes, expected batch 1 with one run");
    });

    /// <summary>
    /// One case in-process: its own outcome, a refusal when it is bad input naming the file, a failure
    /// for any other exception or a wrongly named message, and a hang when it does not finish.
    /// </summary>
    private static Outcome Classified(string path, Func<Outcome> work)
    {
        var run = Task.Run(() =>
        {
            try
            {
                return work();
            }
            catch (InputException e)
            {
                return e.Message.StartsWith(path + ": ", StringComparison.Ordinal)
                    ? new Outcome(Result.Refused, e.Message)
                    : Outcome.Failed($"the message does not start with the file name: {e.Message}");
            }
            catch (Exception e)
            {
                return Outcome.Failed($"{e.GetType().Name}: {e.Message}\n{e.StackTrace}");
            }
        });
        return run.Wait(HangGuard) ? run.Result : Outcome.Failed($"no answer within {HangGuard.TotalSeconds} s (a hang)");
    }

    /// <summary>
    /// The real process with its managed heap capped at 1 GiB: exit 0 or 2 as in-process, a clean
    /// message, no crash (a native crash is a death by a signal, exit 128 + the signal's number).
    /// </summary>
    private static string? ThroughCliProcess(string[] args, string path, Outcome inProcess)
    {
        var info = new ProcessStartInfo("dotnet") { RedirectStandardOutput = true, RedirectStandardError = true, UseShellExecute = false };
        info.ArgumentList.Add(RepoPaths.CliDll);
        foreach (var arg in args) info.ArgumentList.Add(arg);
        info.Environment["DOTNET_GCHeapHardLimit"] = "0x40000000";
        using var process = Process.Start(info)!;
        var stdout = process.StandardOutput.ReadToEndAsync();
        var stderr = process.StandardError.ReadToEndAsync();
        if (!process.WaitForExit(HangGuard))
        {
            process.Kill(entireProcessTree: true);
            return $"no answer within {HangGuard.TotalSeconds} s (a hang)";
        }
        process.WaitForExit();
        var expected = inProcess.Result == Result.Accepted ? 0 : 2;
        if (process.ExitCode > 128) return $"killed by signal {process.ExitCode - 128} (exit {process.ExitCode}): {stderr.Result}";
        if (process.ExitCode != expected) return $"exit {process.ExitCode}, expected {expected}: {stderr.Result}";
        if (expected == 2 && !stderr.Result.StartsWith($"cellc: error: {path}: ", StringComparison.Ordinal)) return $"unclear message: {stderr.Result}";
        if (stdout.Result.Any(c => char.IsControl(c) && c != '\n')) return "stdout holds a control character";
        return null;
    }
}
