using System.CommandLine;
using CellCompiler.Cli;
using CellCompiler.Tests.Support;

namespace CellCompiler.Tests;

/// <summary>
/// Start-up work that `cellc` leaves out (issue 10, fast start): a call builds only the command it
/// names. These tests show that nothing a user sees changes: help still lists every command, each
/// command parses and helps as before, `--version` works without any command, a typo still fails.
/// </summary>
public sealed class StartupTests
{
    private static readonly string[] Commands =
        ["compile", "check", "bench", "merge", "sample", "scale", "render", "inspect", "report", "demo"];

    private static CommandSet Set(params string[] names) =>
        new("test", names.Select(n => (n, (Func<Command>)(() => new Command(n, "the " + n + " command")))).ToList());

    [Fact]
    public void A_call_naming_a_command_builds_that_command_only()
    {
        var root = Set("compile", "check", "merge").RootFor(["check", "pop.jsonl", "--json"]);
        Assert.Equal(["check"], root.Subcommands.Select(c => c.Name));
    }

    [Fact]
    public void Version_alone_builds_no_command_and_anything_else_builds_all()
    {
        var set = Set("compile", "check", "merge");
        Assert.Empty(set.RootFor(["--version"]).Subcommands);
        foreach (var args in new string[][] { [], ["--help"], ["chek"], ["--version", "check"], ["-h"] })
            Assert.Equal(["compile", "check", "merge"], set.RootFor(args).Subcommands.Select(c => c.Name));
    }

    [Fact]
    public void A_table_entry_that_builds_a_command_of_another_name_is_refused()
    {
        var set = new CommandSet("test", [("compile", () => new Command("check"))]);
        var error = Assert.Throws<InvalidOperationException>(() => set.RootFor(["compile"]));
        Assert.Contains("'compile'", error.Message);
        Assert.Contains("'check'", error.Message);
    }

    [Fact]
    public void Help_lists_every_command()
    {
        var help = ProcessRunner.Cellc("--help");
        Assert.Equal(0, help.ExitCode);
        foreach (var name in Commands)
            Assert.Matches(@"(?m)^\s+" + name + @"\s", help.Stdout);
    }

    [Fact]
    public void Every_command_is_reached_by_its_name()
    {
        foreach (var name in Commands)
        {
            var help = ProcessRunner.Cellc(name, "--help");
            Assert.True(help.ExitCode == 0, $"{name} --help: exit {help.ExitCode}\n{help.Stderr}");
            Assert.Contains($"cellc {name}", help.Stdout);
        }
    }

    [Fact]
    public void Version_prints_the_version_only()
    {
        var version = ProcessRunner.Cellc("--version");
        Assert.Equal(0, version.ExitCode);
        Assert.Matches(@"^\d+\.\d+\.\d+\S*\n$", version.Stdout);
        Assert.Equal("", version.Stderr);
    }

    [Fact]
    public void A_mistyped_command_is_still_a_command_line_error()
    {
        var typo = ProcessRunner.Cellc("compil", RepoPaths.Fixture("tidepool-h3.json"));
        Assert.Equal(2, typo.ExitCode);
        Assert.Contains("compil", typo.Stderr);
    }
}
