using System.CommandLine;
using System.Text.Json;
using CellCompiler.Cli.Output;
using CellCompiler.Screening.Merging;

namespace CellCompiler.Cli.Commands;

/// <summary>`cellc merge`: join the JSON Lines outputs of sharded `cellc check` runs and report what is missing or doubled.</summary>
public static class MergeCommand
{
    private const int Listed = 20;

    public static Command Create()
    {
        var output = new Argument<string>("OUT") { Description = "The merged JSON Lines file to write (through a temporary file and a rename)." };
        var shards = new Argument<string[]>("SHARD")
        {
            Description = "Outputs of `cellc check --json` (one record per line, each with an `id`), e.g. of `--shard K/N` runs.",
            Arity = ArgumentArity.OneOrMore,
        };
        var population = new Option<string?>("--population")
        {
            Description = "The population file the shards were checked from: its ids (each line's `id`, else line-N) are " +
                "the expected set, so missing and unexpected ids are found and OUT follows its order. Without it, " +
                "OUT keeps shard then line order and only duplicated and malformed lines can be found.",
            HelpName = "FILE",
        };
        var json = new Option<bool>("--json") { Description = "Print one JSON object summary on stdout instead of the text summary on stderr." };

        var command = new Command("merge",
            "Join shard outputs of `cellc check --json` into OUT, keeping the first record of each id. Reports missing ids " +
            "(with --population), duplicated ids, unexpected ids, malformed lines and cut last lines (a killed run). " +
            "Exit 0 if there is none, 1 otherwise (OUT is still written), 2 on a bad command line or unreadable files.");
        command.Arguments.Add(output);
        command.Arguments.Add(shards);
        command.Options.Add(population);
        command.Options.Add(json);

        command.SetAction(parse =>
        {
            var outPath = parse.GetValue(output)!;
            var full = Path.GetFullPath(outPath);
            if (Directory.Exists(full))
                throw new OutputException($"{outPath}: is a folder; give the merged file's name");
            var folder = Path.GetDirectoryName(full)!;
            if (!Directory.Exists(folder))
                throw new OutputException($"{outPath}: the folder {folder} does not exist");

            MergeReport report;
            try
            {
                report = ShardMerger.Merge(outPath, parse.GetValue(shards)!, parse.GetValue(population));
            }
            // Inputs fail as InputException; whatever else fails with the file system is the output.
            catch (Exception e) when (e is IOException or UnauthorizedAccessException)
            {
                throw new OutputException($"{outPath}: cannot write the file: {e.Message}");
            }

            if (parse.GetValue(json))
            {
                using var stdout = StandardStreams.Output();
                WriteJson(stdout, report);
            }
            else
            {
                WriteText(Console.Error, report);
            }
            return report.Clean ? ExitCodes.Ok : ExitCodes.CandidateFailed;
        });
        return command;
    }

    private static void WriteJson(Stream stream, MergeReport report)
    {
        using (var writer = JsonOutput.Writer(stream))
        {
            writer.WriteStartObject();
            writer.WriteNumber("records", report.Records);
            if (report.Expected is { } expected) writer.WriteNumber("expected", expected);
            else writer.WriteNull("expected");
            WriteStrings(writer, "missing", report.Missing);
            writer.WriteStartArray("duplicates");
            foreach (var d in report.Duplicates)
            {
                writer.WriteStartObject();
                writer.WriteString("id", d.Id);
                writer.WriteString("first", d.First.ToString());
                writer.WriteString("again", d.Again.ToString());
                writer.WriteEndObject();
            }
            writer.WriteEndArray();
            writer.WriteStartArray("malformed");
            foreach (var m in report.Malformed)
            {
                writer.WriteStartObject();
                writer.WriteString("at", m.Place.ToString());
                writer.WriteString("problem", m.Problem);
                writer.WriteEndObject();
            }
            writer.WriteEndArray();
            writer.WriteNumber("malformed_count", report.MalformedCount);
            writer.WriteStartArray("partial");
            foreach (var p in report.Partial)
            {
                writer.WriteStartObject();
                writer.WriteString("at", p.Place.ToString());
                writer.WriteNumber("bytes", p.Bytes);
                if (p.Id is { } id) writer.WriteString("id", id);
                else writer.WriteNull("id");
                writer.WriteEndObject();
            }
            writer.WriteEndArray();
            WriteStrings(writer, "unexpected", report.Unexpected);
            WriteStrings(writer, "population_duplicates", report.PopulationDuplicates);
            writer.WriteStartArray("shards");
            foreach (var s in report.Shards)
            {
                writer.WriteStartObject();
                writer.WriteString("file", s.File);
                writer.WriteNumber("lines", s.Lines);
                writer.WriteNumber("records", s.Kept);
                writer.WriteNumber("duplicates", s.Duplicates);
                writer.WriteNumber("malformed", s.Malformed);
                writer.WriteNumber("partial", s.Partial);
                writer.WriteNumber("blank", s.Blank);
                writer.WriteEndObject();
            }
            writer.WriteEndArray();
            if (report.Population is { } population) writer.WriteString("population", population);
            else writer.WriteNull("population");
            writer.WriteString("output", report.Output);
            writer.WriteBoolean("clean", report.Clean);
            writer.WriteEndObject();
        }
        stream.WriteByte((byte)'\n');
    }

    private static void WriteStrings(Utf8JsonWriter writer, string name, IReadOnlyList<string> values)
    {
        writer.WriteStartArray(name);
        foreach (var value in values) writer.WriteStringValue(value);
        writer.WriteEndArray();
    }

    private static void WriteText(TextWriter to, MergeReport report)
    {
        var from = report.Population is null
            ? "no population given"
            : $"{report.Expected:N0} ids expected from {report.Population}";
        to.WriteLine($"merge: wrote {Wording.Counted(report.Records, "record")} to {TerminalText.Safe(report.Output)} ({TerminalText.Safe(from)})");
        foreach (var s in report.Shards)
        {
            var parts = new List<string> { Wording.Counted(s.Lines, "line"), $"{s.Kept:N0} kept" };
            if (s.Duplicates > 0) parts.Add($"{s.Duplicates:N0} duplicated");
            if (s.Malformed > 0) parts.Add($"{s.Malformed:N0} malformed");
            if (s.Partial > 0) parts.Add("last line cut");
            if (s.Blank > 0) parts.Add($"{s.Blank:N0} blank");
            to.WriteLine($"  {TerminalText.Safe(s.File)}: {string.Join(", ", parts)}");
        }

        if (report.Population is null)
            to.WriteLine("  (without --population, missing ids cannot be found: only duplicated, malformed and cut lines are checked)");
        else
            List(to, "missing ids", report.Missing, id => id);
        List(to, "duplicated ids (the first record is kept)", report.Duplicates,
            d => $"{d.Id}: {d.Again}, first at {d.First}");
        List(to, "malformed lines (skipped)", report.Malformed, m => $"{m.Place}: {m.Problem}", report.MalformedCount);
        List(to, "cut last lines, from a killed run (skipped)", report.Partial,
            p => $"{p.Place}: {p.Bytes:N0} bytes without a final newline" + (p.Id is null ? "" : $" (id {p.Id})"));
        List(to, "unexpected ids, not in the population (written at the end)", report.Unexpected, id => id);
        List(to, "ids repeated in the population (expected once)", report.PopulationDuplicates, id => id);
        to.WriteLine(report.Clean ? "merge: complete, nothing missing or doubled" : "merge: problems found (exit 1)");
    }

    private static void List<T>(TextWriter to, string title, IReadOnlyList<T> items, Func<T, string> show, long? total = null)
    {
        var count = total ?? items.Count;
        if (count == 0) return;
        to.WriteLine($"{title}: {count:N0}");
        foreach (var item in items.Take(Listed)) to.WriteLine($"  {TerminalText.Safe(show(item))}");
        if (count > Listed) to.WriteLine($"  ... and {count - Listed:N0} more");
    }
}
