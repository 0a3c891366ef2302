using System.CommandLine;
using CellCompiler.Cli;
using CellCompiler.Cli.Commands;

var root = new RootCommand(
    "cellc: lowers hierarchical cell genotypes to ONNX models and reports what they cost.\n" +
    "Exit codes: 0 all is well; 1 the work ran but a candidate failed (e.g. a dead cell); 2 bad input or command line.");
root.Subcommands.Add(CompileCommand.Create());
root.Subcommands.Add(ExportTorchCommand.Create());
root.Subcommands.Add(CheckCommand.Create());
root.Subcommands.Add(BenchCommand.Create());
root.Subcommands.Add(MergeCommand.Create());
root.Subcommands.Add(SampleCommand.Create());
root.Subcommands.Add(ScaleCommand.Create());
root.Subcommands.Add(RenderCommand.Create());
root.Subcommands.Add(InspectCommand.Create());
root.Subcommands.Add(ReportCommand.Create(CellCompiler.Rendering.CellRenderer.Svg));
root.Subcommands.Add(DemoCommand.Create());

return CommandRunner.Run(root, args);
