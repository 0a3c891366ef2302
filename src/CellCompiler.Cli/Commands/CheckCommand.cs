using System.CommandLine;
using System.Text.Json;
using CellCompiler.Cli.Options;
using CellCompiler.Cli.Output;
using CellCompiler.Input;
using CellCompiler.Screening;

namespace CellCompiler.Cli.Commands;

/// <summary>`cellc check`: compile each candidate, smoke-test it on ONNX Runtime, apply budgets.</summary>
public static class CheckCommand
{
    public static Command Create()
    {
        var input = new Argument<string>("INPUT")
        {
            Description = "A genotype file, a population file (.jsonl or .ndjson: one genotype per line), or - for JSON Lines on stdin.",
        };
        var json = new Option<bool>("--json") { Description = "One JSON object per candidate per line instead of the table." };
        var latency = new Option<bool>("--latency") { Description = "Measure CPU latency of every working candidate." };
        var skeleton = new SkeletonOptions();
        var settings = new CompileSettingsOptions();
        var budgets = new BudgetOptions();
        var latencyOptions = new LatencyOptions();

        var command = new Command("check",
            "Compile each candidate in memory, run it on ONNX Runtime (CPU) at batch 1 and 2, and check that it loads, " +
            "has the inferred output shape, gives finite logits that depend on the input, and fits the budgets. " +
            "Statuses: ok, over_budget, broken, invalid. Exit 0 if all are ok, 1 otherwise, 2 on a bad command line " +
            "or a bad single genotype file.");
        command.Arguments.Add(input);
        command.Options.Add(json);
        command.Options.Add(latency);
        skeleton.AddTo(command);
        settings.AddTo(command);
        budgets.AddTo(command);
        latencyOptions.AddTo(command);

        command.SetAction(parse =>
        {
            var budget = budgets.Resolve(parse);
            var measure = parse.GetValue(latency) || budget.NeedsLatency;
            var requested = latencyOptions.Resolve(parse); // validated even when unused, so typos surface
            var latencySettings = measure ? requested : null;
            // A latency budget is judged at batch 1, so batch 1 is always measured.
            if (latencySettings is not null && !latencySettings.BatchSizes.Contains(1))
                latencySettings = latencySettings with { Batches = [1, .. latencySettings.BatchSizes] };
            var options = new CheckOptions(skeleton.Resolve(parse), settings.Resolve(parse), budget,
                parse.GetValue(budgets.TrainBatch), latencySettings);

            var (candidates, single) = OpenInput(parse.GetValue(input)!);
            var allOk = true;
            var singleInvalid = false;
            var table = parse.GetValue(json) ? null : new CheckTable(Console.Out, measure);
            table?.WriteHeader();
            using var stdout = Console.OpenStandardOutput();
            foreach (var candidate in candidates)
            {
                var record = CandidateChecker.Check(candidate, options);
                allOk &= record.Status == CheckStatus.Ok;
                singleInvalid |= single && record.Status == CheckStatus.Invalid;
                if (table is null)
                {
                    // One whole line per candidate, flushed as soon as it is final.
                    using (var writer = JsonOutput.Writer(stdout))
                        CheckRecordJson.Write(writer, record);
                    stdout.WriteByte((byte)'\n');
                    stdout.Flush();
                }
                else
                {
                    table.WriteRow(record);
                }
            }
            table?.WriteSummary();
            // A single genotype file that cannot form a network is bad input, as for `compile`.
            return singleInvalid ? ExitCodes.BadInput : allOk ? ExitCodes.Ok : ExitCodes.CandidateFailed;
        });
        return command;
    }

    /// <summary>
    /// A single genotype file is parsed up front (bad input: exit 2); a population is read lazily,
    /// a bad line becoming that candidate's invalid record. A population is `-`, a .jsonl or .ndjson
    /// file, or any file whose first two non-blank lines each start a JSON object.
    /// </summary>
    private static (IEnumerable<Candidate> Candidates, bool Single) OpenInput(string input)
    {
        if (input == "-")
            return (PopulationReader.Read(Console.In, "<stdin>"), false);
        if (!File.Exists(input))
            throw new InputException(input, "", Directory.Exists(input) ? "is a folder, not a file" : "file not found");
        var extension = Path.GetExtension(input).ToLowerInvariant();
        if (extension is ".jsonl" or ".ndjson" || LooksLikeJsonLines(input))
            return (ReadPopulationFile(input), false);
        var genotype = GenotypeReader.ReadFile(input);
        return ([Candidate.Valid(genotype.Id ?? genotype.Name, genotype)], true);
    }

    private static bool LooksLikeJsonLines(string path)
    {
        try
        {
            using var reader = new StreamReader(path);
            var starts = 0;
            var buffer = new char[4096];
            var read = reader.ReadBlock(buffer, 0, buffer.Length);
            foreach (var line in new string(buffer, 0, read).Split('\n').Select(l => l.Trim()).Where(l => l.Length > 0).Take(2))
                if (line.StartsWith('{') && line.EndsWith('}')) starts++;
            return starts == 2;
        }
        catch (IOException) { return false; }
    }

    private static IEnumerable<Candidate> ReadPopulationFile(string path)
    {
        using var reader = new StreamReader(path);
        foreach (var candidate in PopulationReader.Read(reader, path))
            yield return candidate;
    }
}
