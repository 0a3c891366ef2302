using System.CommandLine;
using System.Globalization;
using CellCompiler.Input;
using CellCompiler.Io;
using CellCompiler.Sampling;
using CellCompiler.Vocabulary;

namespace CellCompiler.Cli.Commands;

/// <summary>`cellc sample`: uniformly random genotypes of a given shape as JSON Lines (issue 4).</summary>
public static class SampleCommand
{
    private const string Origin = "command line";
    private const long MaxCount = 10_000_000;

    public static Command Create()
    {
        var levels = new Option<string>("--levels")
        {
            Description = $"Node count per level, e.g. 4,5 ({Limits.MinNodes} to {Limits.MaxNodes} each, at most {Limits.MaxLevels} levels).",
            HelpName = "a,b,c",
            Required = true,
        };
        var motifs = new Option<string?>("--motifs")
        {
            Description = $"Motif count per level, e.g. 6,1 (1 to {Limits.MaxMotifsPerLevel} each; the last level holds the cell, so 1). " +
                "Default: 1 per level.",
            HelpName = "a,b,c",
        };
        var count = new Option<long>("--count")
        {
            Description = $"How many genotypes, 1 to {MaxCount:N0}.",
            HelpName = "K",
            Required = true,
        };
        var seed = new Option<long>("--seed")
        {
            Description = "Seed of the sampler; the same seed and options give the same bytes.",
            HelpName = "S",
            DefaultValueFactory = _ => 0,
        };
        var noneWeight = new Option<double>("--none-weight")
        {
            Description = "Weight of `none` against weight 1 for every other op: 1 (default) makes it as likely as any op, " +
                "0 lists every pair.",
            HelpName = "W",
            DefaultValueFactory = _ => 1,
        };
        var primitives = new Option<string?>("--primitives")
        {
            Description = "A JSON file of declared primitives (an object from names to {\"kind\": ..., parameters}, as a genotype's " +
                "`primitives` field); sampled genotypes carry the declarations they use.",
            HelpName = "FILE",
        };
        var ops = new Option<string?>("--ops")
        {
            Description = "The level-0 alphabet: built-in and declared primitive names and identity, e.g. conv1x1,wide5,identity. " +
                "Default: identity, every built-in, every declared primitive.",
            HelpName = "a,b,c",
        };
        var output = new Option<string?>("--output", "-o")
        {
            Description = "Write to this file (through a temporary file and a rename) instead of stdout.",
            HelpName = "FILE",
        };

        var command = new Command("sample",
            "Print uniformly random genotypes as JSON Lines: every pair (i, j) of every motif draws its op from its " +
            "level's alphabet (--ops at level 0, by default identity and every primitive; the motifs below plus identity above), none included; none edges " +
            "are left out. Motifs are named m{level}_{index}, the cell 'cell'; ids are s{seed}-{n}. Deterministic for a seed.");
        foreach (var option in new Option[] { levels, motifs, count, seed, noneWeight, primitives, ops, output })
            command.Options.Add(option);

        command.SetAction(parse =>
        {
            var nodes = ParseList(parse.GetValue(levels)!, "--levels");
            var motifText = parse.GetValue(motifs);
            var motifCounts = motifText is null ? Enumerable.Repeat(1, nodes.Count).ToList() : ParseList(motifText, "--motifs");
            var weight = parse.GetValue(noneWeight);
            var table = parse.GetValue(primitives) is { } primitivesPath ? PrimitiveDeclarations.ReadFile(primitivesPath) : PrimitiveTable.BuiltinsOnly;
            var alphabet = parse.GetValue(ops) is { } opsText
                ? opsText.Split(',').Select(op => op.Trim()).ToList()
                : null;
            var problem = GenotypeSampler.Check(nodes, motifCounts, weight, table, alphabet);
            if (problem is not null)
            {
                var option = problem.Parameter switch
                {
                    SampleParameter.Nodes => "--levels",
                    SampleParameter.Motifs => "--motifs",
                    SampleParameter.Ops => "--ops",
                    SampleParameter.NoneWeight => "--none-weight",
                    _ => throw new InvalidOperationException($"unknown sample parameter {problem.Parameter}"),
                };
                throw new InputException(Origin, option, problem.Problem);
            }
            var total = parse.GetValue(count);
            if (total is < 1 or > MaxCount)
                throw new InputException(Origin, "--count", $"must be between 1 and {MaxCount:N0}, found {total}");

            var sampler = new GenotypeSampler(nodes, motifCounts, weight, parse.GetValue(seed), table, alphabet);
            var path = parse.GetValue(output);
            if (path is null) WriteToStdout(sampler, total);
            else WriteToFile(path, sampler, total);
            return ExitCodes.Ok;
        });
        return command;
    }

    private static List<int> ParseList(string text, string option)
    {
        var values = new List<int>();
        foreach (var part in text.Split(','))
        {
            if (!int.TryParse(part.Trim(), NumberStyles.None, CultureInfo.InvariantCulture, out var value))
                throw new InputException(Origin, option, $"'{text}' is not a comma-separated list of positive integers");
            values.Add(value);
        }
        return values;
    }

    /// <summary>One compact JSON object and a `\n` per genotype; only one genotype is in memory at a time.</summary>
    private static void WriteLines(Stream stream, GenotypeSampler sampler, long count)
    {
        using var json = JsonOutput.Writer(stream);
        foreach (var genotype in sampler.Sample(count))
        {
            GenotypeJson.Write(json, genotype);
            json.Flush();
            json.Reset();
            stream.WriteByte((byte)'\n');
        }
    }

    private static void WriteToStdout(GenotypeSampler sampler, long count)
    {
        using var stdout = Console.OpenStandardOutput();
        using var buffered = new BufferedStream(stdout, 1 << 16);
        try
        {
            WriteLines(buffered, sampler, count);
            buffered.Flush();
        }
        catch (IOException e)
        {
            throw new OutputException($"cannot write to standard output: {e.Message}");
        }
    }

    /// <summary>Streams through the one atomic writer: no reader ever sees a partial population.</summary>
    private static void WriteToFile(string path, GenotypeSampler sampler, long count) =>
        AtomicFile.Write(path, stream => WriteLines(stream, sampler, count));
}
