using System.CommandLine;
using CellCompiler.Input;
using CellCompiler.Reporting;

namespace CellCompiler.Cli.Commands;

/// <summary>`cellc report`: one self-contained HTML page from the output of `cellc check --json`.</summary>
public static class ReportCommand
{
    private const string Origin = "command line";

    /// <param name="drawCell">Draws one cell as SVG, for the pictures of the Pareto-front cells (with --genotypes).</param>
    public static Command Create(Func<Genotype, string>? drawCell = null)
    {
        var results = new Argument<string>("RESULTS")
        {
            Description = "The output of `cellc check --json` (JSON Lines, one record per line). Lines that are not records are reported and skipped.",
        };
        var output = new Option<string>("--output", "-o")
        {
            Description = "The HTML file to write (through a temporary file and a rename).",
            HelpName = "report.html",
            DefaultValueFactory = _ => "report.html",
        };
        var genotypes = new Option<string?>("--genotypes")
        {
            Description = "The population the results were checked from (JSON Lines genotypes): the cells of the Pareto front are drawn.",
            HelpName = "POPULATION.jsonl",
        };
        var title = new Option<string?>("--title") { Description = "The page title (default: \"Screening report: \" and the results file's name).", HelpName = "TEXT" };
        var scores = new Option<string?>("--scores")
        {
            Description = "Metrics brought back for candidates (e.g. accuracy after training): JSON Lines of {\"id\": ..., \"<metric>\": number, ...}, " +
                "joined to the records by id. Ids on one side only are reported. A bad line is exit 2 with its file and line.",
            HelpName = "SCORES.jsonl",
        };
        var objective = new Option<string[]>("--objective")
        {
            Description = "Weigh a metric against cost: its Pareto fronts against params, MACs and latency are drawn and listed, and it becomes a " +
                "table column. NAME is a metric of --scores or a numeric field of the records' meta; :max (the default) or :min says which way is better. Repeatable.",
            HelpName = "NAME[:max|min]",
            DefaultValueFactory = _ => [],
        };
        var includeTrivial = new Option<bool>("--include-trivial")
        {
            Description = "Keep cells with no trainable op (the trivial-cell note) on the Pareto fronts; by default they are drawn but left out.",
        };
        var tableRows = new Option<int>("--table-rows")
        {
            Description = "At most this many rows in the candidate table; past it, the first by status (ok first) then params. Counts and charts cover every record.",
            HelpName = "N",
            DefaultValueFactory = _ => 20_000,
        };

        var command = new Command("report",
            "Write one self-contained HTML page (no network needed to view it) from `cellc check --json` output: counts by status " +
            "and top reasons; latency against MACs and params, params against MACs, with their Pareto fronts and the run's budgets as " +
            "lines; histograms of params and MACs; with --scores and --objective, each objective against cost; every front listed, " +
            "its cells drawn (with --genotypes); a sortable table of candidates. Exit 2 on unreadable input or no records.");
        command.Arguments.Add(results);
        foreach (var option in new Option[] { output, genotypes, scores, objective, includeTrivial, title, tableRows })
            command.Options.Add(option);

        command.SetAction(parse =>
        {
            var limit = parse.GetValue(tableRows);
            if (limit < 1) throw new InputException(Origin, "--table-rows", $"must be at least 1, found {limit}");
            var outPath = parse.GetValue(output)!;
            if (Directory.Exists(outPath))
                throw new OutputException($"{outPath}: is a folder; give the report file's name");
            var resultsPath = parse.GetValue(results)!;
            var objectives = parse.GetValue(objective)!.Select(text => Objective.Parse(text, Origin)).ToList();
            var repeated = objectives.GroupBy(o => o.Name, StringComparer.Ordinal).FirstOrDefault(g => g.Count() > 1);
            if (repeated is not null) throw new InputException(Origin, "--objective", $"'{repeated.Key}' is given more than once");
            var report = HtmlReport.Build(resultsPath, new ReportOptions
            {
                Title = parse.GetValue(title),
                GenotypesPath = parse.GetValue(genotypes),
                DrawCell = drawCell,
                ScoresPath = parse.GetValue(scores),
                Objectives = objectives,
                IncludeTrivial = parse.GetValue(includeTrivial),
                TableRowLimit = limit,
            });
            AtomicFile.Write(outPath, report.Utf8());

            foreach (var warning in report.Warnings)
                Console.Error.WriteLine($"cellc: warning: {warning}");
            var s = report.Summary;
            var table = report.TableCapped ? $" (table: {report.TableRows:N0} of them)" : "";
            var pictures = parse.GetValue(genotypes) is null ? "" : $", {report.Pictures:N0} cell {(report.Pictures == 1 ? "picture" : "pictures")}";
            var fronts = string.Join(", ", report.Fronts.Select(f => $"{f.Title} {f.Count:N0}"));
            Console.Error.WriteLine($"report: wrote {outPath}: {s.Total:N0} records{table}; Pareto fronts: {(fronts.Length == 0 ? "none" : fronts)}{pictures}");
            return ExitCodes.Ok;
        });
        return command;
    }
}
