using System.CommandLine;
using System.CommandLine.Parsing;
using CellCompiler.Cli.Options;
using CellCompiler.Cli.Output;
using CellCompiler.Compilation;
using CellCompiler.Input;
using CellCompiler.Io;
using CellCompiler.TorchExport;

namespace CellCompiler.Cli.Commands;

/// <summary>`cellc export-torch`: one genotype to one Python file of torch.nn modules that loads `compile`'s weights.</summary>
public static class ExportTorchCommand
{
    public static Command Create()
    {
        var genotype = new Argument<string>("GENOTYPE") { Description = "Genotype file (JSON, format genotype/1)." };
        var output = new Option<string?>("--output", "-o")
        {
            Description = "Where to write the Python file (default: the genotype file's name, each character other than " +
                          "a letter, digit or _ as _, with .py, in the current folder, so that it can be imported).",
            HelpName = "OUT.py",
        };
        var settings = new CompileSettingsOptions();
        var skeleton = new SkeletonOptions();

        var command = new Command("export-torch",
            "Write the network of a genotype and a skeleton as one Python file of torch.nn modules (a class per " +
            "primitive and per motif used, named like the ONNX nodes) with build() and load_onnx_weights(model, path), " +
            "which loads the weights of the ONNX file `cellc compile` writes with the same genotype and skeleton. " +
            "Exit 1 if the cell is dead, 2 on bad input.");
        command.Arguments.Add(genotype);
        command.Options.Add(output);
        settings.AddTo(command);
        skeleton.AddTo(command);

        command.SetAction(parse =>
        {
            var genotypePath = parse.GetValue(genotype)!;
            var path = parse.GetValue(output) ?? DefaultOutput(genotypePath);
            if (SameFile(path, genotypePath))
                throw new InputException(SkeletonOverrides.Origin, "--output", $"'{path}' is the genotype file; the module must go to another file");
            var parsed = GenotypeReader.ReadFile(genotypePath);
            var resolved = skeleton.Resolve(parse);
            CompiledModel model;
            try { model = Compiler.Compile(parsed, resolved, settings.Resolve(parse)); }
            catch (Graph.CompileException e) { throw new InputException(genotypePath, "", e.Message); }
            catch (Lowering.DeadCellException e) { throw e.In(genotypePath); }

            var module = TorchExporter.Export(parsed, model);
            AtomicFile.Write(path, module.Bytes);

            var f = model.Figures;
            Console.Out.WriteLine($"{path}: {model.Name} as torch.nn modules");
            Console.Out.WriteLine($"  skeleton     {CompileReport.DescribeSkeleton(model.Skeleton)}");
            Console.Out.WriteLine($"  primitives   {string.Join(", ", module.PrimitiveClasses)}");
            Console.Out.WriteLine($"  motifs       {string.Join(", ", module.MotifClasses)}");
            Console.Out.WriteLine($"  params       {Formatting.Count(f.Params)}, buffers {Formatting.Count(f.Buffers)}");
            Console.Out.WriteLine($"  weights      load_onnx_weights(model, path) reads the ONNX file of `{TerminalText.Safe(CompileCall(parse, output))}` (any --seed)");
            foreach (var warning in model.Warnings)
                Console.Out.WriteLine($"  warning      {warning}");
            return ExitCodes.Ok;
        });
        return command;
    }

    /// <summary>tidepool-vocab.json -> tidepool_vocab.py: an importable module name.</summary>
    /// <summary>The `cellc compile` call that writes this module's weights: the same arguments without --output.</summary>
    private static string CompileCall(ParseResult parse, Option<string?> output)
    {
        var words = new List<string> { "cellc", "compile" };
        var skipNext = false;
        foreach (var token in parse.Tokens)
        {
            if (skipNext) { skipNext = false; continue; }
            if (token.Type == TokenType.Command) continue;
            if (token.Type == TokenType.Option && (token.Value == output.Name || output.Aliases.Contains(token.Value))) { skipNext = true; continue; }
            words.Add(token.Value.Contains(' ') ? $"'{token.Value}'" : token.Value);
        }
        return string.Join(' ', words);
    }

    private static string DefaultOutput(string genotypePath)
    {
        var stem = Path.GetFileNameWithoutExtension(genotypePath);
        var name = new string(stem.Select(c => char.IsAsciiLetterOrDigit(c) || c == '_' ? c : '_').ToArray());
        if (name.Length == 0 || char.IsAsciiDigit(name[0])) name = "_" + name;
        return name + ".py";
    }

    private static bool SameFile(string a, string b) =>
        string.Equals(Path.GetFullPath(a), Path.GetFullPath(b), StringComparison.Ordinal);
}
