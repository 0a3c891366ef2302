using System.CommandLine;
using CellCompiler.Cli;
using CellCompiler.Cli.Commands;

// Every command, by name. A call builds only what it needs (see CommandSet): building all of them,
// with their options and descriptions, is start-up time that a search loop calling `cellc compile`
// once per candidate would pay on every call.
var commands = new CommandSet(
    "cellc: lowers hierarchical cell genotypes to ONNX models and reports what they cost.\n" +
    "Exit codes: 0 all is well; 1 the work ran but a candidate failed (e.g. a dead cell); 2 bad input or command line.",
    [
        ("compile", CompileCommand.Create),
        ("export-torch", ExportTorchCommand.Create),
        ("check", CheckCommand.Create),
        ("bench", BenchCommand.Create),
        ("calibrate", CalibrateCommand.Create),
        ("merge", MergeCommand.Create),
        ("sample", SampleCommand.Create),
        ("space", SpaceCommand.Create),
        ("mutate", MutateCommand.Create),
        ("scale", ScaleCommand.Create),
        ("render", RenderCommand.Create),
        ("inspect", InspectCommand.Create),
        ("report", () => ReportCommand.Create(CellCompiler.Rendering.CellRenderer.Svg)),
        ("demo", DemoCommand.Create),
    ]);

return CommandRunner.Run(commands.RootFor(args), args);
