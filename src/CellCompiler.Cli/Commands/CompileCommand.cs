using System.CommandLine;
using CellCompiler.Cli.Options;
using CellCompiler.Cli.Output;
using CellCompiler.Compilation;
using CellCompiler.Input;

namespace CellCompiler.Cli.Commands;

/// <summary>`cellc compile`: one genotype to one ONNX file and a summary of its figures.</summary>
public static class CompileCommand
{
    public static Command Create()
    {
        var genotype = new Argument<string>("GENOTYPE") { Description = "Genotype file (JSON, format genotype/1)." };
        var output = new Option<string?>("--output", "-o")
        {
            Description = "Where to write the model (default: the genotype file's name with .onnx, in the current folder).",
            HelpName = "OUT.onnx",
        };
        var noWrite = new Option<bool>("--no-write") { Description = "Compile and report without writing the model file." };
        var settings = new CompileSettingsOptions();
        var json = new Option<bool>("--json") { Description = "Print one JSON object instead of the summary." };
        var skeleton = new SkeletonOptions();

        var command = new Command("compile",
            "Lower a genotype and a skeleton to an ONNX model, then print its shapes, params, buffers, MACs, " +
            "peak activation memory, op counts and warnings. Exit 1 if the cell is dead, 2 on bad input.");
        command.Arguments.Add(genotype);
        foreach (var option in new Option[] { output, noWrite, json })
            command.Options.Add(option);
        settings.AddTo(command);
        skeleton.AddTo(command);

        command.SetAction(parse =>
        {
            var genotypePath = parse.GetValue(genotype)!;
            var parsed = GenotypeReader.ReadFile(genotypePath);
            var resolved = skeleton.Resolve(parse);
            CompiledModel model;
            try { model = Compiler.Compile(parsed, resolved, settings.Resolve(parse)); }
            catch (Graph.CompileException e) { throw new InputException(genotypePath, "", e.Message); }
            catch (Lowering.DeadCellException e) { throw e.In(genotypePath); }

            string? path = null;
            if (!parse.GetValue(noWrite))
            {
                path = parse.GetValue(output) ?? Path.GetFileNameWithoutExtension(genotypePath) + ".onnx";
                AtomicFile.Write(path, model.OnnxBytes);
            }

            if (parse.GetValue(json))
            {
                using var stdout = Console.OpenStandardOutput();
                CompileReport.WriteJson(stdout, model, path);
            }
            else
            {
                CompileReport.WriteText(Console.Out, model, path);
            }
            return ExitCodes.Ok;
        });
        return command;
    }
}
