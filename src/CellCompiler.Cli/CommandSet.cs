using System.CommandLine;

namespace CellCompiler.Cli;

/// <summary>
/// The commands of `cellc`, built lazily. A call that names a command gets a root with that one
/// command; `cellc --version` alone gets a bare root; anything else (help, no command, a mistyped
/// name) gets every command, so that help lists them all and a typo gets its suggestions.
/// Parsing and help of the named command are the same either way: they depend only on it.
/// </summary>
public sealed class CommandSet(string description, IReadOnlyList<(string Name, Func<Command> Create)> commands)
{
    public RootCommand RootFor(string[] args)
    {
        var root = new RootCommand(description);
        if (args is ["--version"]) return root;
        var named = args.Length > 0 ? commands.FirstOrDefault(c => c.Name == args[0]) : default;
        if (named.Create is not null)
        {
            root.Subcommands.Add(Built(named));
            return root;
        }
        foreach (var command in commands) root.Subcommands.Add(Built(command));
        return root;
    }

    private static Command Built((string Name, Func<Command> Create) entry)
    {
        var command = entry.Create();
        // The table's name is the one looked up in args[0]; a mismatch would send a call to the wrong command.
        if (command.Name != entry.Name)
            throw new InvalidOperationException($"command table entry '{entry.Name}' builds a command named '{command.Name}'");
        return command;
    }
}
