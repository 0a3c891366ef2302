using System.Text;

namespace CellCompiler.Rendering;

/// <summary>The two inks of a line family: its lines, and its labels' text (darker or lighter where the line alone would not reach 4.5:1).</summary>
public readonly record struct FamilyInk(string Line, string Text);

/// <summary>
/// One theme of the palette: every colour that the cell pictures (SVG and DOT) and the report's page
/// and charts use, as #rrggbb. <see cref="CssVariables"/> turns it into CSS custom properties
/// (`--cellc-page`, `--cellc-conv-line`, ...), which both the pictures and the report read, so that a
/// picture inside the report matches the page around it.
/// </summary>
public sealed record Theme(
    string Name,
    string Page, string Surface, string Sunk, string Rule, string Text, string Muted, string Axis, string Grid,
    string Accent, string Ok, string OverBudget, string Broken, string Invalid, string Front,
    string InputNode, string MergeNode, string MergeLine, string DeadLine,
    IReadOnlyDictionary<LineFamily, FamilyInk> Families)
{
    /// <summary>Every colour with its CSS custom property name, in a fixed order.</summary>
    public IEnumerable<(string Variable, string Colour)> Variables()
    {
        yield return ("--cellc-page", Page);
        yield return ("--cellc-surface", Surface);
        yield return ("--cellc-sunk", Sunk);
        yield return ("--cellc-rule", Rule);
        yield return ("--cellc-text", Text);
        yield return ("--cellc-muted", Muted);
        yield return ("--cellc-axis", Axis);
        yield return ("--cellc-grid", Grid);
        yield return ("--cellc-accent", Accent);
        yield return ("--cellc-ok", Ok);
        yield return ("--cellc-over-budget", OverBudget);
        yield return ("--cellc-broken", Broken);
        yield return ("--cellc-invalid", Invalid);
        yield return ("--cellc-front", Front);
        yield return ("--cellc-io", InputNode);
        yield return ("--cellc-merge", MergeNode);
        yield return ("--cellc-merge-line", MergeLine);
        yield return ("--cellc-dead", DeadLine);
        foreach (var family in LineFamilies.All)
        {
            var css = LineFamilies.Style(family).Css;
            yield return ($"--cellc-{css}-line", Families[family].Line);
            yield return ($"--cellc-{css}-text", Families[family].Text);
        }
    }

    /// <summary>"--cellc-page: #f6f3ec; ..." for a CSS rule's body.</summary>
    public string CssVariables()
    {
        var css = new StringBuilder();
        foreach (var (variable, colour) in Variables()) css.Append(variable).Append(": ").Append(colour).Append("; ");
        return css.ToString().TrimEnd();
    }
}

/// <summary>
/// The palette of everything `cellc` draws, light and dark, derived from the report's own colours:
/// warm paper and warm near-black ink (hue about 40 degrees, low chroma), the teal accent, and the
/// status colours (ok green, over_budget ochre, broken brick, invalid violet, front plum).
/// The line families take their hues from those colours and differ in lightness: in the light theme
/// the level-0 families sit at CIE L* 24, 31, 38, 45, 52 and 59 (identity, bottleneck, convolution,
/// depthwise, factorized, pooling), in the dark theme at 85, 78, 71, 64, 57 and 50 (identity,
/// convolution, pooling, factorized, depthwise, bottleneck), so that they stay apart in lightness
/// as well as in hue and line pattern. The motif line is the text ink. Contrast (WCAG 2 relative
/// luminance): every text colour reaches 4.5:1 on the backgrounds it is drawn on, every line 3:1
/// on the panel, except dead lines, which are faded on purpose (their labels still reach 4.5:1).
/// PaletteTests compute all of it.
/// </summary>
public static class Palette
{
    public static readonly Theme Light = new(
        Name: "light",
        Page: "#f6f3ec", Surface: "#fffdf8", Sunk: "#efebe2", Rule: "#dcd5c8", Text: "#24211c", Muted: "#5f5a50",
        Axis: "#8c857a", Grid: "#e8e2d6",
        Accent: "#0d6f68", Ok: "#1b744e", OverBudget: "#95590b", Broken: "#b23a26", Invalid: "#5f5893", Front: "#a8205f",
        InputNode: "#dcefec", MergeNode: "#f6e7c8", MergeLine: "#95590b", DeadLine: "#a39b8e",
        Families: new Dictionary<LineFamily, FamilyInk>
        {
            [LineFamily.Convolution] = new("#0c655e", "#0c655e"),
            [LineFamily.Depthwise] = new("#6a63a1", "#6a63a1"),
            [LineFamily.Factorized] = new("#218c5e", "#1e8358"),
            [LineFamily.Bottleneck] = new("#8a1a4e", "#8a1a4e"),
            [LineFamily.Pooling] = new("#cd7a0f", "#a6650f"),
            [LineFamily.Identity] = new("#3b3933", "#3b3933"),
            [LineFamily.Motif] = new("#24211c", "#24211c"),
        });

    public static readonly Theme Dark = new(
        Name: "dark",
        Page: "#171512", Surface: "#1f1c18", Sunk: "#29251f", Rule: "#3d372f", Text: "#ede7dc", Muted: "#aaa296",
        Axis: "#857d71", Grid: "#2e2a24",
        Accent: "#5cc6b9", Ok: "#5cc495", OverBudget: "#e3a94b", Broken: "#f08468", Invalid: "#b0abe0", Front: "#f77ab6",
        InputNode: "#173430", MergeNode: "#3b2e16", MergeLine: "#e3a94b", DeadLine: "#6f675b",
        Families: new Dictionary<LineFamily, FamilyInk>
        {
            [LineFamily.Convolution] = new("#7fcec9", "#7fcec9"),
            [LineFamily.Depthwise] = new("#8982bc", "#8982bc"),
            [LineFamily.Factorized] = new("#3aae7c", "#3aae7c"),
            [LineFamily.Bottleneck] = new("#cf3f82", "#d55b95"),
            [LineFamily.Pooling] = new("#e59f46", "#e59f46"),
            [LineFamily.Identity] = new("#d6d4cf", "#d6d4cf"),
            [LineFamily.Motif] = new("#ede7dc", "#ede7dc"),
        });

    public static readonly IReadOnlyList<Theme> Themes = [Light, Dark];
}
