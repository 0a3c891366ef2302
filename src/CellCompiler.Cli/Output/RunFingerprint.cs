using CellCompiler.Input;
using CellCompiler.Screening;

namespace CellCompiler.Cli.Output;

/// <summary>
/// What a results file was made from (input, skeleton, options), kept beside it as FILE.settings,
/// so that --resume never mixes records of different screenings in one file.
/// </summary>
public static class RunFingerprint
{
    public static string PathFor(string resultsPath) => resultsPath + ".settings";

    public static IReadOnlyList<string> Of(string input, CheckOptions options, ShardSelector shard)
    {
        var latency = options.EffectiveLatency;
        return
        [
            $"input = {(input == "-" ? "-" : Path.GetFullPath(input))}",
            $"skeleton = {options.Skeleton.ToJson()}",
            $"seed = {options.Compile.Seed}",
            $"opset = {options.Compile.Opset}",
            $"budgets = {options.Budgets}",
            $"train batch = {options.TrainBatch}",
            $"latency = {(latency is null ? "not measured" : $"threads {latency.Threads}, batches {string.Join(",", latency.BatchSizes)}, warmup {latency.Warmup}, runs {latency.Runs}, min seconds {latency.MinSeconds}")}",
            $"shard = {shard}",
        ];
    }

    public static void Write(string resultsPath, IReadOnlyList<string> fingerprint) =>
        AtomicFile.Write(PathFor(resultsPath), System.Text.Encoding.UTF8.GetBytes(string.Join("\n", fingerprint) + "\n"));

    /// <summary>Refuses to resume a file made with other settings; a file without a fingerprint is accepted.</summary>
    public static void RequireSame(string resultsPath, IReadOnlyList<string> fingerprint)
    {
        var path = PathFor(resultsPath);
        if (!File.Exists(path) || !File.Exists(resultsPath)) return;
        var before = File.ReadAllLines(path).Where(l => l.Length > 0).ToList();
        var differ = fingerprint.Where(line => !before.Contains(line)).Select(line => line[..line.IndexOf(" = ", StringComparison.Ordinal)]).ToList();
        if (differ.Count > 0)
            throw new InputException(resultsPath, "",
                $"was made by a screening with other settings ({string.Join(", ", differ)} differ, see {path}); " +
                "resume with the same input and options, or start again without --resume");
    }
}
