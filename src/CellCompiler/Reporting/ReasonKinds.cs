using System.Text.RegularExpressions;
using CellCompiler.Screening;

namespace CellCompiler.Reporting;

/// <summary>
/// The general kind of a check record's reason, without this instance's names and numbers, for the
/// report's "top reasons". A check record carries only the reason text, so the kind is read back from
/// it; the kinds match the ones `cellc check` prints in its own summary ("over --max-params",
/// "dead cell", "invalid: unknown op", ...). Null for <see cref="CheckStatus.Ok"/>.
/// </summary>
public static partial class ReasonKinds
{
    /// <summary>Phrases of the broken reasons that `cellc check` writes, and their kinds.</summary>
    private static readonly (string Phrase, string Kind)[] BrokenPhrases =
    [
        (" is dead", "dead cell"),
        ("latency measurement failed", "latency measurement failed"),
        ("could not load the model", "runtime cannot load"),
        ("failed while running the model", "runtime failure"),
        ("does not depend on the input", "input-independent output"),
        ("the output shape is", "wrong output shape"),
        ("are not finite", "non-finite logits"),
    ];

    public static string? Of(CheckStatus status, string? reason)
    {
        if (status == CheckStatus.Ok) return null;
        if (string.IsNullOrWhiteSpace(reason)) return status.Name();
        switch (status)
        {
            case CheckStatus.OverBudget:
                var options = BudgetOption().Matches(reason).Select(m => m.Groups[1].Value).Distinct().ToList();
                if (options.Count > 0) return "over " + string.Join(", ", options);
                return reason.Contains("not run on ONNX Runtime: it needs", StringComparison.Ordinal)
                    ? "too large to run here"
                    : General(reason);
            case CheckStatus.Broken:
                foreach (var (phrase, kind) in BrokenPhrases)
                    if (reason.Contains(phrase, StringComparison.Ordinal)) return kind;
                return General(reason);
            default:
                // "FILE line N: levels[0].motifs.cell.edges[0]: unknown op 'conv5x5' ..." -> "invalid: unknown op"
                // (the origin and the JSON path are the leading parts without spaces, or "FILE line N").
                var parts = reason.Split(": ");
                var first = 0;
                while (first < parts.Length - 1 && (!parts[first].Contains(' ') || LineOrigin().IsMatch(parts[first])))
                    first++;
                return "invalid: " + General(string.Join(": ", parts[first..]));
        }
    }

    /// <summary>The text before the first name, quote or bracket, without digits (as `cellc check` groups problems).</summary>
    private static string General(string problem)
    {
        var cut = problem.IndexOfAny([':', '\'', '"', '(', '[', ';']);
        var text = cut > 0 ? problem[..cut] : problem;
        var kind = new string(text.Where(c => !char.IsDigit(c)).ToArray()).Trim();
        return kind.Length == 0 ? "other" : kind.Length > 80 ? kind[..80] + "..." : kind;
    }

    [GeneratedRegex(@"exceeds (--max-[a-z-]+)")]
    private static partial Regex BudgetOption();

    [GeneratedRegex(@" line \d+$")]
    private static partial Regex LineOrigin();
}
