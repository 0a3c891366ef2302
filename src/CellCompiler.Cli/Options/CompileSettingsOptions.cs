using System.CommandLine;
using CellCompiler.Compilation;
using CellCompiler.Onnx;

namespace CellCompiler.Cli.Options;

/// <summary>--seed and --opset, shared by every command that compiles.</summary>
public sealed class CompileSettingsOptions
{
    public Option<long> Seed { get; } = new("--seed")
    {
        HelpName = "N",
        Description = "Seed of the weight generator; changes only weight values.",
        DefaultValueFactory = _ => 0,
        CustomParser = HumanNumber.LongNumber,
    };

    public Option<int> Opset { get; } = new("--opset")
    {
        HelpName = "N",
        Description = $"ONNX opset to target, {OnnxVersions.MinOpset} to {OnnxVersions.MaxOpset}.",
        DefaultValueFactory = _ => OnnxVersions.DefaultOpset,
        CustomParser = r => HumanNumber.WholeNumber(OnnxVersions.MinOpset, OnnxVersions.MaxOpset)(r),
    };

    public void AddTo(Command command)
    {
        command.Options.Add(Seed);
        command.Options.Add(Opset);
    }

    public CompileOptions Resolve(ParseResult parse) => new(parse.GetValue(Seed), parse.GetValue(Opset));
}
