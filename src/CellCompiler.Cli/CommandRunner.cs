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
                // Every problem of the file on its own line, each with the file and its JSON path.
                foreach (var problem in input.Problems)
                    Error("cellc: error: ", problem.Describe(input.Origin));
                return ExitCodes.BadInput;
            case DeadCellException dead:
                Error("cellc: ", dead.Message);
                return ExitCodes.CandidateFailed;
            case CompileException compile:
                Error("cellc: error: ", compile.Message);
                return ExitCodes.BadInput;
            case OutputException output:
                Error("cellc: error: ", output.Message);
                return ExitCodes.BadInput;
            case IOException or UnauthorizedAccessException:
                // The machine, not the candidate: a full disk, a vanished folder, a permission.
                Error("cellc: error: ", e.Message);
                return ExitCodes.BadInput;
            default:
                // A bug, not bad input: say so plainly, still without a stack trace.
                Error($"cellc: internal error ({e.GetType().Name}): ", e.Message);
                Console.Error.WriteLine("This is a bug in cellc; please report it with the input that caused it.");
                return 70;
        }
    }

    /// <summary>One message on one line, escaped for the terminal (file-borne text may hold control characters).</summary>
    private static void Error(string prefix, string message) =>
        Console.Error.WriteLine(prefix + Output.TerminalText.Safe(message));
}
