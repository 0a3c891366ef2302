using System.CommandLine;
using CellCompiler.Input;
using CellCompiler.Lowering;
using CellCompiler.Graph;

namespace CellCompiler.Cli;

/// <summary>
/// Runs the parsed command and turns every expected failure into a one-line message and the
/// contract's exit code: never a stack trace.
/// </summary>
public static class CommandRunner
{
    public static int Run(RootCommand root, string[] args)
    {
        // Every write to standard output goes through a guard: a closed stdout is one plain message, exit 2.
        Console.SetOut(Output.StandardStreams.OutputWriter());
        var parse = root.Parse(args);
        if (parse.Errors.Count > 0)
        {
            foreach (var error in parse.Errors)
                Console.Error.WriteLine($"cellc: {Output.TerminalText.Safe(error.Message)}");
            Console.Error.WriteLine("Run 'cellc --help' or 'cellc COMMAND --help' for usage.");
            return ExitCodes.BadInput;
        }
        try
        {
            var code = parse.Invoke(new InvocationConfiguration { EnableDefaultExceptionHandler = false });
            Console.Out.Flush();
            return code;
        }
        catch (Exception e)
        {
            return Report(e);
        }
    }

    public static int Report(Exception e)
    {
        switch (e)
        {
            case InputException input:
                Console.Error.WriteLine($"cellc: error: {Output.TerminalText.Safe(input.Message)}");
                return ExitCodes.BadInput;
            case DeadCellException dead:
                Console.Error.WriteLine($"cellc: {Output.TerminalText.Safe(dead.Message)}");
                return ExitCodes.CandidateFailed;
            case CompileException compile:
                Console.Error.WriteLine($"cellc: error: {Output.TerminalText.Safe(compile.Message)}");
                return ExitCodes.BadInput;
            case OutputException output:
                Console.Error.WriteLine($"cellc: error: {Output.TerminalText.Safe(output.Message)}");
                return ExitCodes.BadInput;
            case IOException or UnauthorizedAccessException:
                // The machine, not the candidate: a full disk, a vanished folder, a permission.
                Console.Error.WriteLine($"cellc: error: {Output.TerminalText.Safe(e.Message)}");
                return ExitCodes.BadInput;
            default:
                // A bug, not bad input: say so plainly, still without a stack trace.
                Console.Error.WriteLine($"cellc: internal error ({e.GetType().Name}): {Output.TerminalText.Safe(e.Message)}");
                Console.Error.WriteLine("This is a bug in cellc; please report it with the input that caused it.");
                return 70;
        }
    }
}
