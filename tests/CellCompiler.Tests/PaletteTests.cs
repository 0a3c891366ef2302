using System.Globalization;
using System.Text.RegularExpressions;
using CellCompiler.Rendering;
using CellCompiler.Reporting;

namespace CellCompiler.Tests;

/// <summary>
/// WCAG 2.x contrast, written here from the published standard (Web Content Accessibility Guidelines
/// 2.1, definitions "relative luminance" and "contrast ratio"): sRGB channels linearised with the
/// 0.03928 threshold (the standard's value; 0.04045 gives the same result for 8-bit colours), luminance
/// L = 0.2126 R + 0.7152 G + 0.0722 B, ratio (L1 + 0.05) / (L2 + 0.05). CIE 1976 L* from the same
/// luminance (CIE 15, L* = 116 (Y)^(1/3) - 16 above (6/29)^3).
/// </summary>
internal static class Wcag
{
    public static (double R, double G, double B) Rgb(string hex)
    {
        Assert.Matches("^#[0-9a-f]{6}$", hex);
        double Channel(int at) => int.Parse(hex.AsSpan(at, 2), NumberStyles.HexNumber, CultureInfo.InvariantCulture) / 255.0;
        return (Channel(1), Channel(3), Channel(5));
    }

    public static double Luminance(string hex)
    {
        static double Linear(double c) => c <= 0.03928 ? c / 12.92 : Math.Pow((c + 0.055) / 1.055, 2.4);
        var (r, g, b) = Rgb(hex);
        return 0.2126 * Linear(r) + 0.7152 * Linear(g) + 0.0722 * Linear(b);
    }

    public static double Contrast(string a, string b)
    {
        var (la, lb) = (Luminance(a), Luminance(b));
        return (Math.Max(la, lb) + 0.05) / (Math.Min(la, lb) + 0.05);
    }

    public static double Lightness(string hex)
    {
        var y = Luminance(hex);
        return y > Math.Pow(6.0 / 29, 3) ? 116 * Math.Cbrt(y) - 16 : y * Math.Pow(29.0 / 3, 3);
    }
}

/// <summary>
/// The palette of pictures and report (issue 14): every text colour reaches WCAG AA (4.5:1) on every
/// background it is drawn on, in both themes; lines reach 3:1 (WCAG 2.1 non-text contrast) except the
/// deliberately faded dead lines; the line families stay apart for readers with a colour-vision
/// deficiency, by pattern and by lightness; and nothing else than the palette's colours is written.
/// </summary>
public sealed class PaletteTests
{
    public static TheoryData<string> Themes() => new(Palette.Themes.Select(t => t.Name));

    private static Theme Of(string name) => Palette.Themes.Single(t => t.Name == name);

    /// <summary>(what, text colour, background) for every text the pictures and the page draw.</summary>
    private static IEnumerable<(string What, string Text, string Background)> TextPairs(Theme t)
    {
        // Cell pictures: heading and notes on the backdrop, panel text on panels, node numbers on node fills,
        // edge labels on their background (the panel colour), dead labels and captions muted.
        foreach (var bg in new[] { ("page", t.Page), ("panel", t.Surface) })
        {
            yield return ($"text on {bg.Item1}", t.Text, bg.Item2);
            yield return ($"muted on {bg.Item1}", t.Muted, bg.Item2);
        }
        foreach (var bg in new[] { ("input/output node", t.InputNode), ("merge node", t.MergeNode) })
            yield return ($"node number on {bg.Item1}", t.Text, bg.Item2);
        foreach (var (family, ink) in t.Families)
            yield return ($"{family} label on panel", ink.Text, t.Surface);
        // The report: body text, muted text, links and the kicker (accent), status badges, tiles and reasons,
        // the front marker, on the page, on cards and on the sunk table header and hovered rows.
        foreach (var bg in new[] { ("page", t.Page), ("card", t.Surface), ("sunk", t.Sunk) })
            foreach (var (name, colour) in new[]
                     {
                         ("text", t.Text), ("muted", t.Muted), ("accent", t.Accent), ("ok", t.Ok), ("over_budget", t.OverBudget),
                         ("broken", t.Broken), ("invalid", t.Invalid), ("front", t.Front),
                     })
                yield return ($"{name} on {bg.Item1}", colour, bg.Item2);
    }

    [Theory]
    [MemberData(nameof(Themes))]
    public void Every_text_colour_reaches_WCAG_AA_on_its_backgrounds(string theme)
    {
        var failures = TextPairs(Of(theme))
            .Select(p => (p.What, Ratio: Wcag.Contrast(p.Text, p.Background)))
            .Where(p => p.Ratio < 4.5)
            .Select(p => $"{p.What}: {p.Ratio:0.00}:1").ToList();
        Assert.True(failures.Count == 0, $"{theme}: below 4.5:1: {string.Join("; ", failures)}");
    }

    [Theory]
    [MemberData(nameof(Themes))]
    public void Lines_and_shapes_reach_3_to_1_on_the_panel_and_dead_lines_are_fainter(string theme)
    {
        var t = Of(theme);
        foreach (var (family, ink) in t.Families)
            Assert.True(Wcag.Contrast(ink.Line, t.Surface) >= 3, $"{theme} {family} line: {Wcag.Contrast(ink.Line, t.Surface):0.00}:1");
        Assert.True(Wcag.Contrast(t.MergeLine, t.Surface) >= 3);
        Assert.True(Wcag.Contrast(t.Text, t.InputNode) >= 3);
        // Faded on purpose, yet visible: fainter than every live line, still apart from the panel.
        var dead = Wcag.Contrast(t.DeadLine, t.Surface);
        Assert.InRange(dead, 1.5, t.Families.Values.Min(f => Wcag.Contrast(f.Line, t.Surface)) - 0.1);
    }

    [Fact]
    public void Families_that_meet_in_a_panel_differ_in_line_pattern_in_svg_and_in_dot()
    {
        // Colour-vision deficiencies take hue away, not pattern: each family of a panel has its own.
        foreach (var group in LineFamilies.SharePanels)
        {
            var svg = group.Select(f => LineFamilies.Style(f)).Select(s => (s.Dash, s.Width, s.Rails, s.RoundDots)).ToList();
            Assert.Equal(svg.Count, svg.Distinct().Count());
            var patterns = group.Select(f => LineFamilies.Style(f).Pattern).ToList();
            Assert.Equal(patterns.Count, patterns.Distinct().Count());
            var dot = group.Select(f => LineFamilies.Style(f)).Select(s => (s.DotStyle, s.DotPenWidth, s.Rails)).ToList();
            Assert.Equal(dot.Count, dot.Distinct().Count());
        }
        // And across all families, the legend never shows two samples alike.
        Assert.Equal(LineFamilies.All.Count, LineFamilies.All.Select(f => LineFamilies.Style(f).Pattern).Distinct().Count());
    }

    [Theory]
    [MemberData(nameof(Themes))]
    public void Families_that_meet_in_a_panel_differ_in_lightness_by_at_least_6_L_star(string theme)
    {
        // Common practice: lightness survives the common colour-vision deficiencies far better than hue,
        // so a lightness step keeps lines apart even where hues merge. L* from the CIE 1976 formula above.
        var t = Of(theme);
        foreach (var group in LineFamilies.SharePanels)
            foreach (var a in group)
                foreach (var b in group.Where(b => b > a))
                {
                    var gap = Math.Abs(Wcag.Lightness(t.Families[a].Line) - Wcag.Lightness(t.Families[b].Line));
                    Assert.True(gap >= 6, $"{theme}: {a} and {b} differ by only {gap:0.0} L*");
                }
    }

    [Fact]
    public void The_formula_matches_the_standards_reference_points()
    {
        // WCAG's own end points: black on white is 21:1, a colour on itself 1:1; L* of white is 100.
        Assert.Equal(21.0, Wcag.Contrast("#000000", "#ffffff"), 6);
        Assert.Equal(1.0, Wcag.Contrast("#777777", "#777777"), 6);
        Assert.Equal(100.0, Wcag.Lightness("#ffffff"), 3);
        // A value often quoted with the standard (from memory): #767676 on white is about 4.54:1, the lightest grey that passes AA.
        Assert.InRange(Wcag.Contrast("#767676", "#ffffff"), 4.5, 4.6);
    }

    private static readonly Regex Hex = new("#[0-9a-fA-F]{6}\\b", RegexOptions.Compiled);

    /// <summary>Every #rrggbb colour of the palette, both themes.</summary>
    private static HashSet<string> PaletteColours() =>
        Palette.Themes.SelectMany(t => t.Variables().Select(v => v.Colour)).ToHashSet(StringComparer.OrdinalIgnoreCase);

    [Fact]
    public void Pictures_dot_and_report_styles_use_only_the_palettes_colours()
    {
        var allowed = PaletteColours();
        var genotype = Input.GenotypeReader.Parse(Demo.DemoData.ReefCell, "demo", "demo");
        var outputs = new Dictionary<string, string>
        {
            ["svg"] = CellRenderer.Svg(genotype),
            ["dot"] = CellRenderer.Dot(genotype),
            ["report css"] = ReportStyle.Css,
        };
        foreach (var (what, text) in outputs)
        {
            var foreign = Hex.Matches(text).Select(m => m.Value).Where(c => !allowed.Contains(c)).Distinct().ToList();
            Assert.True(foreign.Count == 0, $"{what} uses colours outside the palette: {string.Join(", ", foreign)}");
            // No named colours either (grey, gray, white...): DOT and CSS would take them from elsewhere.
            Assert.DoesNotMatch("(?i)(color|fill|stroke)[=:] *\"?(gray|grey|black|white|lightgrey)\\b", text);
        }
    }

    [Fact]
    public void No_text_is_drawn_with_transparency()
    {
        // A faded text's contrast is not its colour's: the pictures fade dead parts by colour only.
        Assert.DoesNotContain("opacity", SvgStyle.Css);
    }
}
