using System.Globalization;
using System.Text;

namespace CellCompiler.Rendering;

/// <summary>
/// The stylesheet embedded in every SVG picture. Colours are the palette's CSS custom properties
/// (light by default, dark when the reader's system prefers dark); a page that embeds the picture,
/// such as the report, may set the same properties to follow its own theme switch. No text is drawn
/// with transparency, so the contrast of every text colour is the palette's.
/// </summary>
public static class SvgStyle
{
    public static string Css { get; } = Build();

    private static string Build()
    {
        var css = new StringBuilder();
        css.Append('\n');
        css.Append($".cellc-render {{ {Palette.Light.CssVariables()} }}\n");
        css.Append($"@media (prefers-color-scheme: dark) {{ .cellc-render {{ {Palette.Dark.CssVariables()} }} }}\n");
        css.Append($$"""
            .cellc-render { font-family: {{TextMetrics.SansFamily}}; }
            .cellc-render text { fill: var(--cellc-text); }
            .cellc-render .backdrop { fill: var(--cellc-page); }
            .cellc-render .heading { font-size: 17px; font-weight: 700; }
            .cellc-render .subheading { font-size: 12.5px; fill: var(--cellc-muted); }
            .cellc-render .panel { fill: var(--cellc-surface); stroke: var(--cellc-rule); stroke-width: 1; }
            .cellc-render .panel.cell { stroke: var(--cellc-muted); stroke-width: 1.5; }
            .cellc-render .panel-title { font-size: {{Num(PanelLayout.TitleFontSize)}}px; font-weight: 700; }
            .cellc-render .panel-info { font-size: {{Num(PanelLayout.InfoFontSize)}}px; fill: var(--cellc-muted); }
            .cellc-render .edge { fill: none; stroke-linejoin: round; }
            .cellc-render .rail-gap { fill: none; stroke: var(--cellc-surface); }
            .cellc-render .edge-label { font-family: {{TextMetrics.MonoFamily}}; font-size: {{Num(PanelLayout.LabelFontSize)}}px; text-anchor: middle; }
            .cellc-render .label-bg { fill: var(--cellc-surface); }
            .cellc-render .node .shape { fill: var(--cellc-surface); stroke: var(--cellc-text); stroke-width: 1.6; }
            .cellc-render .node.io .shape { fill: var(--cellc-io); }
            .cellc-render .node.merge .shape { fill: var(--cellc-merge); stroke: var(--cellc-merge-line); stroke-width: 2; }
            .cellc-render .node.dead .shape { fill: var(--cellc-surface); stroke: var(--cellc-dead); stroke-dasharray: 3 3; }
            .cellc-render .node-index { font-size: 12px; font-weight: 700; text-anchor: middle; }
            .cellc-render .node.dead .node-index { fill: var(--cellc-muted); font-weight: 400; }
            .cellc-render .node-caption { font-size: {{Num(PanelLayout.CaptionFontSize)}}px; text-anchor: middle; fill: var(--cellc-muted); }
            .cellc-render .legend-lead { font-size: 12px; fill: var(--cellc-muted); }
            .cellc-render .legend-title { font-size: 12px; font-weight: 700; }
            .cellc-render .legend { font-size: 12px; }
            .cellc-render .note { font-size: 12px; }

            """);
        foreach (var family in LineFamilies.All)
        {
            var style = LineFamilies.Style(family);
            var c = style.Css;
            var width = style.Rails ? 2 * style.Width + RailGap : style.Width;
            var dash = style.Dash is null ? "" : $" stroke-dasharray: {style.Dash};";
            var cap = style.RoundDots ? " stroke-linecap: round;" : "";
            css.Append($".cellc-render .edge.{c} {{ stroke: var(--cellc-{c}-line); stroke-width: {Num(width)};{dash}{cap} }}\n");
            css.Append($".cellc-render .rail-gap.{c} {{ stroke-width: {Num(RailGap)}; }}\n");
            css.Append($".cellc-render .arrow.{c} path {{ fill: var(--cellc-{c}-line); }}\n");
            css.Append($".cellc-render .edge-label.{c} {{ fill: var(--cellc-{c}-text); }}\n");
        }
        // Dead parts: the dead ink, the family's pattern kept; labels muted and in italics, never transparent.
        css.Append(".cellc-render .edge.dead { stroke: var(--cellc-dead); }\n");
        css.Append(".cellc-render .arrow.dead path { fill: var(--cellc-dead); }\n");
        css.Append(".cellc-render .edge-label.dead { fill: var(--cellc-muted); font-style: italic; }\n");
        return css.ToString();
    }

    /// <summary>The width of the knocked-out middle of a two-rail line.</summary>
    public const double RailGap = 1.8;

    private static string Num(double value) => value.ToString("0.##", CultureInfo.InvariantCulture);
}
