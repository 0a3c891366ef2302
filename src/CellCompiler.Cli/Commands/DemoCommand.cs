using System.CommandLine;
using CellCompiler.Cli.Output;
using CellCompiler.Demo;
using CellCompiler.Screening;

namespace CellCompiler.Cli.Commands;

/// <summary>`cellc demo`: the main job end to end on invented data, in a folder of its own.</summary>
public static class DemoCommand
{
    public static Command Create()
    {
        var dir = new Option<string>("--dir") { HelpName = "DIR", Description = "Folder to make (replaced if it holds an earlier demo).", DefaultValueFactory = _ => "cellc-demo" };
        var command = new Command("demo",
            "Run the whole job on invented data: compile two cells at proxy and full size, screen 200 generated " +
            "candidates with budgets and latency for the survivors, and write results.jsonl, report.html and cell pictures.");
        command.Options.Add(dir);
        command.SetAction(parse =>
        {
            var result = DemoRun.Run(parse.GetValue(dir)!, step => Console.Error.WriteLine($"cellc demo: {step}..."));
            var output = Console.Out;
            output.WriteLine();
            output.WriteLine("Scenario (invented): cells for a classifier of tide-pool photographs, 10 kinds, 32x32 crops.");
            output.WriteLine();
            output.WriteLine($"{"cell",-16} {"size",-6} {"params",10} {"MACs",10}");
            foreach (var c in result.Compiled)
                output.WriteLine($"{c.Name,-16} {c.Preset,-6} {Formatting.Scaled(c.Figures.Params),10} {Formatting.Scaled(c.Figures.Macs),10}");
            output.WriteLine();
            output.WriteLine($"Screening at proxy size with --max-params {Formatting.Scaled(DemoData.MaxParams)} --max-macs {Formatting.Scaled(DemoData.MaxMacs)} --latency:");
            ScreeningReport.Write(output, result.Screening, result.Elapsed);
            output.WriteLine();
            output.WriteLine($"Files in {result.Folder}:");
            foreach (var group in result.Files.GroupBy(f => Path.GetDirectoryName(Path.GetRelativePath(result.Folder, f.Path)) ?? ""))
            {
                var files = group.ToList();
                if (files.Count > 4)
                    output.WriteLine($"  {group.Key}/  {files.Count} files ({files[0].What}, ...)");
                else
                    foreach (var f in files)
                        output.WriteLine($"  {Path.GetRelativePath(result.Folder, f.Path),-40} {f.What}");
            }
            output.WriteLine();
            output.WriteLine($"Done in {Formatting.Duration(result.Elapsed)}. Open {Path.Combine(result.Folder, "report.html")} in a browser.");
            output.WriteLine("Memory figures are estimates; CPU latency measured here does not transfer to other hardware.");
            return ExitCodes.Ok;
        });
        return command;
    }
}
