using CellCompiler.Input;

namespace CellCompiler.Reporting;

/// <summary>What goes into a report besides the results file.</summary>
public sealed record ReportOptions
{
    /// <summary>The page title (default: "Screening report" and the results file's name).</summary>
    public string? Title { get; init; }

    /// <summary>The population the results were checked from (JSON Lines genotypes), for the pictures of the front cells.</summary>
    public string? GenotypesPath { get; init; }

    /// <summary>How the page names the population (default: its path).</summary>
    public string? GenotypesDisplayName { get; init; }

    /// <summary>Draws one cell as an SVG document or element; without it no picture is drawn.</summary>
    public Func<Genotype, string>? DrawCell { get; init; }

    /// <summary>Metrics by candidate id (JSON Lines of {"id": ..., "metric": number}), joined to the records.</summary>
    public string? ScoresPath { get; init; }

    /// <summary>Figures weighed against cost: metrics of the scores file or numeric fields of the records' meta.</summary>
    public IReadOnlyList<Objective> Objectives { get; init; } = [];

    /// <summary>Keep trivial cells (no trainable op) on the Pareto fronts; by default they are left out.</summary>
    public bool IncludeTrivial { get; init; }

    /// <summary>At most this many rows in the candidate table (past it: the first by status, then params).</summary>
    public int TableRowLimit { get; init; } = 20_000;

    /// <summary>At most this many points per scatter plot (past it: every k-th candidate; the front is always drawn).</summary>
    public int ScatterPointLimit { get; init; } = 20_000;

    /// <summary>How many reason kinds the summary lists.</summary>
    public int TopReasons { get; init; } = 10;
}
