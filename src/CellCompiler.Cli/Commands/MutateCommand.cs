using System.CommandLine;
using CellCompiler.Cli.Options;
using CellCompiler.Cli.Output;
using CellCompiler.Input;
using CellCompiler.Mutation;
using CellCompiler.Screening;

namespace CellCompiler.Cli.Commands;

/// <summary>`cellc mutate`: point mutations of genotypes as JSON Lines, optionally only ones that change the network (issue 13).</summary>
public static class MutateCommand
{
    private const string Origin = "command line";

    public static Command Create()
    {
        var input = new Argument<string>("INPUT") { Description = "A genotype file, a population file (JSON Lines) or - for JSON Lines on standard input." };
        var count = new Option<int>("--count", "-n")
        {
            Description = "Mutants per parent (default 1).",
            HelpName = "K",
            DefaultValueFactory = _ => 1,
            CustomParser = r => HumanNumber.WholeNumber(1, MutationOptions.MaxCount)(r),
        };
        var seed = new Option<long>("--seed")
        {
            Description = "Seed; mutant n of a parent depends only on the seed, the parent's id and n.",
            HelpName = "S",
            DefaultValueFactory = _ => 0,
            CustomParser = HumanNumber.LongNumber,
        };
        var distinct = new Option<bool>("--distinct")
        {
            Description = "Draw again until the mutant's network_hash differs from the parent's and its cell is alive; " +
                "give up after --max-tries draws (exit 1).",
        };
        var ops = new Option<string?>("--ops")
        {
            Description = "The level-0 alphabet, e.g. none,identity,conv3x3,wide5 (default: identity, none, every built-in and " +
                "the parent's declared primitives).",
            HelpName = "a,b,c",
        };
        var merge = new Option<string>("--merge")
        {
            Description = "Merge mode under which --distinct compares networks: concat (default) or sum.",
            HelpName = "concat|sum",
            DefaultValueFactory = _ => "concat",
        };
        var maxTries = new Option<int>("--max-tries")
        {
            Description = $"Draws per mutant before giving up (default {MutationOptions.DefaultMaxTries:N0}).",
            HelpName = "N",
            DefaultValueFactory = _ => MutationOptions.DefaultMaxTries,
            CustomParser = r => HumanNumber.WholeNumber(1, 1_000_000)(r),
        };
        var output = new Option<string?>("--output", "-o")
        {
            Description = "Write to this file (through a temporary file and a rename: nothing is left on an error) instead of stdout.",
            HelpName = "FILE",
        };

        var command = new Command("mutate",
            "Write point mutants of each genotype as JSON Lines: a level, a motif of it that the cell uses, a node pair, and " +
            "a new op for the pair drawn uniformly from the level's other ops. Each mutant's id is the parent's id plus -mN; " +
            "its meta keeps the parent's and adds parent and mutation. Deterministic for a seed. Exit 1 if --distinct gave up on a mutant.");
        command.Arguments.Add(input);
        foreach (var option in new Option[] { count, seed, distinct, ops, merge, maxTries, output })
            command.Options.Add(option);

        command.SetAction(parse =>
        {
            var mergeText = parse.GetValue(merge)!;
            var mergeMode = SkeletonReader.ParseMerge(mergeText)
                ?? throw new InputException(Origin, "--merge", $"'{mergeText}' is not a merge; use concat or sum");
            var options = new MutationOptions(parse.GetValue(count), parse.GetValue(seed), parse.GetValue(distinct),
                ParseOps(parse.GetValue(ops)), mergeMode, parse.GetValue(maxTries));
            var source = CandidateSource.Open([parse.GetValue(input)!], StandardStreams.Input);
            var parents = source.Read(warning => Console.Error.WriteLine($"cellc mutate: warning: {TerminalText.Safe(warning)}"));
            void Failed(MutantResult r) =>
                Console.Error.WriteLine($"cellc mutate: {TerminalText.Safe(r.Id)}: gave up: {TerminalText.Safe(r.Failure)}");

            MutationSummary summary;
            if (parse.GetValue(output) is { } path)
                summary = AtomicFile.Write(path, stream => MutationRun.Write(parents, options, stream, Failed));
            else
            {
                using var stdout = new BufferedStream(StandardStreams.Output(), 1 << 16);
                summary = MutationRun.Write(parents, options, stdout, Failed);
                stdout.Flush();
            }

            var retried = options.Distinct || summary.Retries > 0
                ? $"; {Wording.Counted(summary.Retries, "draw")} retried" + (options.Distinct ? " (--distinct)" : "")
                : "";
            var gaveUp = summary.GaveUp > 0 ? $"; gave up on {Wording.Counted(summary.GaveUp, "mutant")}" : "";
            Console.Error.WriteLine($"cellc mutate: {Wording.Counted(summary.Mutants, "mutant")} of {Wording.Counted(summary.Parents, "parent")}{retried}{gaveUp}");
            return summary.GaveUp > 0 ? ExitCodes.CandidateFailed : ExitCodes.Ok;
        });
        return command;
    }

    /// <summary>The --ops list: names checked for shape here, against each parent's vocabulary when it is mutated.</summary>
    private static IReadOnlyList<string>? ParseOps(string? text)
    {
        if (text is null) return null;
        var list = text.Split(',').Select(op => op.Trim()).ToList();
        if (list.Any(op => op.Length == 0))
            throw new InputException(Origin, "--ops", $"'{text}' has an empty name; give a comma-separated list such as none,identity,conv3x3");
        var repeated = list.GroupBy(op => op, StringComparer.Ordinal).FirstOrDefault(g => g.Count() > 1);
        if (repeated is not null)
            throw new InputException(Origin, "--ops", $"'{repeated.Key}' is listed twice; each op is drawn with the same weight once");
        if (list.Count < 2)
            throw new InputException(Origin, "--ops", "give at least two ops: a mutation replaces a pair's op with another one");
        return list;
    }
}
