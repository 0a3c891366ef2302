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
        var tableRows = new Option<int>("--table-rows")
        {
            Description = "At most this many rows in the candidate table; past it, the first by status (ok first) then params. Counts and charts cover every record.",
            HelpName = "N",
            DefaultValueFactory = _ => 20_000,
        };

        var command = new Command("report",
            "Write one self-contained HTML page (no network needed to view it) from `cellc check --json` output: counts by status " +
            "and top reasons, params against MACs and against latency p50 with the Pareto front, histograms of params and MACs, " +
            "the Pareto-front cells (with --genotypes) and a sortable table of candidates. Exit 2 on unreadable input or no records.");
        command.Arguments.Add(results);
        foreach (var option in new Option[] { output, genotypes, title, tableRows })
            command.Options.Add(option);

        command.SetAction(parse =>
        {
            var limit = parse.GetValue(tableRows);
            if (limit < 1) throw new InputException(Origin, "--table-rows", $"must be at least 1, found {limit}");
            var outPath = parse.GetValue(output)!;
            if (Directory.Exists(outPath))
                throw new OutputException($"{outPath}: is a folder; give the report file's name");
            var resultsPath = parse.GetValue(results)!;
            var report = HtmlReport.Build(resultsPath, new ReportOptions
            {
                Title = parse.GetValue(title),
                GenotypesPath = parse.GetValue(genotypes),
                DrawCell = drawCell,
                TableRowLimit = limit,
            });
            AtomicFile.Write(outPath, report.Utf8());

            foreach (var warning in report.Warnings)
                Console.Error.WriteLine($"cellc: warning: {warning}");
            var s = report.Summary;
            var table = report.TableCapped ? $" (table: {report.TableRows:N0} of them)" : "";
            var pictures = parse.GetValue(genotypes) is null ? "" : $", {report.Pictures:N0} cell {(report.Pictures == 1 ? "picture" : "pictures")}";
            Console.Error.WriteLine($"report: wrote {outPath}: {s.Total:N0} records{table}, {s.ParamsVsMacs.Points.Count:N0} on the Pareto front{pictures}");
            return ExitCodes.Ok;
        });
        return command;
    }
}
