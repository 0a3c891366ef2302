using System.CommandLine;
using System.Text;
using CellCompiler.Input;
using CellCompiler.Rendering;

namespace CellCompiler.Cli.Commands;

/// <summary>`cellc render`: a picture of the cell and its used motifs, as SVG or Graphviz DOT (issue 5).</summary>
public static class RenderCommand
{
    private const string Origin = "command line";

    public static Command Create()
    {
        var genotype = new Argument<string>("GENOTYPE") { Description = "Genotype file (JSON, format genotype/1)." };
        var output = new Option<string?>("--output", "-o")
        {
            Description = "Where to write the picture: FILE.svg or FILE.dot (the extension chooses the format), or - for stdout. " +
                "Default: the genotype file's name with .svg, in the current folder.",
            HelpName = "FILE.svg|FILE.dot",
        };
        var format = new Option<string?>("--format")
        {
            Description = "svg or dot, whatever the output file's extension (needed only for other extensions).",
            HelpName = "svg|dot",
        };
        format.AcceptOnlyFromAmong("svg", "dot");

        var command = new Command("render",
            "Draw the cell and every motif it uses: nodes left to right in topological order, numbered, edges labelled with their op " +
            "in their kind family's colour and line pattern, merges as diamonds, dead nodes and edges faded; unused and dead motifs " +
            "are listed, not drawn; a key names each family and every declared primitive with its parameters. " +
            "SVG (made in-process, light and dark) or Graphviz DOT with the same content. Exit 2 on bad input.");
        command.Arguments.Add(genotype);
        command.Options.Add(output);
        command.Options.Add(format);

        command.SetAction(parse =>
        {
            var genotypePath = parse.GetValue(genotype)!;
            var path = parse.GetValue(output);
            var chosen = ChooseFormat(path, parse.GetValue(format));
            var parsed = GenotypeReader.ReadFile(genotypePath);

            var model = RenderModel.Build(parsed);
            var text = chosen == "dot" ? DotWriter.Write(model) : SvgWriter.Write(model);
            var bytes = new UTF8Encoding(encoderShouldEmitUTF8Identifier: false).GetBytes(text);
            var toStdout = path == "-";
            var report = toStdout ? Console.Error : Console.Out;

            if (!model.CellIsLive)
                Console.Error.WriteLine(
                    $"cellc: warning: {genotypePath}: the cell is dead (its output does not depend on its input); drawn faded");

            if (toStdout)
            {
                using var stdout = Console.OpenStandardOutput();
                stdout.Write(bytes);
                stdout.Flush();
                report.WriteLine($"wrote the {chosen.ToUpperInvariant()} picture of {parsed.Name} to stdout ({Drawn(model)})");
            }
            else
            {
                path ??= Path.GetFileNameWithoutExtension(genotypePath) + "." + chosen;
                AtomicFile.Write(path, bytes);
                report.WriteLine($"wrote {path}: {chosen.ToUpperInvariant()} picture of {parsed.Name} ({Drawn(model)})");
            }
            return ExitCodes.Ok;
        });
        return command;
    }

    /// <summary>--format wins; otherwise the output file's extension decides; stdout and the default are SVG.</summary>
    private static string ChooseFormat(string? path, string? format)
    {
        if (format is not null) return format;
        if (path is null || path == "-") return "svg";
        return Path.GetExtension(path).ToLowerInvariant() switch
        {
            ".svg" => "svg",
            ".dot" or ".gv" => "dot",
            var other => throw new InputException(Origin, "--output",
                $"cannot tell the format from '{path}' ({(other.Length == 0 ? "no extension" : other)}): " +
                "use a .svg or .dot file, or --format svg|dot"),
        };
    }

    private static string Drawn(RenderModel model)
    {
        var motifs = model.Panels.Count - 1;
        var text = motifs == 0 ? "the cell" : $"the cell and {motifs} used motif{(motifs == 1 ? "" : "s")}";
        var omitted = model.Omitted.Count;
        if (omitted > 0) text += $"; {omitted} unused or dead motif{(omitted == 1 ? "" : "s")} listed, not drawn";
        return text;
    }
}
