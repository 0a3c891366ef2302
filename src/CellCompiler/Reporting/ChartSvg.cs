using OxyPlot;

namespace CellCompiler.Reporting;

/// <summary>The colours a chart uses, named so that the page's light and dark themes can set them.</summary>
public enum Ink
{
    Text,
    Axis,
    Grid,
    Ok,
    Over,
    Broken,
    Front,
    Budget,
}

/// <summary>
/// Exports an OxyPlot model as an inline SVG element that follows the page's theme. The model is
/// drawn with placeholder colours (<see cref="Color"/>), one per <see cref="Ink"/>; the exported
/// SVG then gets text in `currentColor` and every other placeholder as a CSS variable
/// (`var(--ink-ok)`, ...), which the page's stylesheet sets for light and dark.
/// </summary>
public static class ChartSvg
{
    public const double Width = 600;
    public const double Height = 380;

    /// <summary>OxyPlot measures text with the metrics of Helvetica (metric-compatible with Arial and Liberation Sans).</summary>
    public const string MeasuredFont = "Arial";

    public static OxyColor Color(Ink ink) => OxyColor.FromRgb(1, (byte)(101 + (int)ink), 2);

    public static OxyColor Color(Ink ink, byte alpha) => OxyColor.FromArgb(alpha, 1, (byte)(101 + (int)ink), 2);

    public static string CssVariable(Ink ink) => "--ink-" + ink.ToString().ToLowerInvariant();

    /// <summary>The size of a small chart: text keeps its size, the plot is smaller.</summary>
    public const double SmallWidth = 440;
    public const double SmallHeight = 300;

    /// <summary>The SVG element, with the given id and class `chart`, scaling to its container's width.</summary>
    public static string Export(PlotModel model, string id, string label, bool small = false)
    {
        var (width, height) = small ? (SmallWidth, SmallHeight) : (Width, Height);
        var measurer = new ChartTextMeasurer();
        var svg = SvgExporter.ExportToString(model, width, height, isDocument: false, measurer);
        svg = SvgFragment.Inline(svg, id + "-");
        svg = svg.Replace($"fill=\"{Placeholder(Ink.Text)}\"", "fill=\"currentColor\"", StringComparison.Ordinal);
        foreach (var ink in Enum.GetValues<Ink>())
            svg = svg.Replace(Placeholder(ink), $"var({CssVariable(ink)})", StringComparison.Ordinal);
        svg = svg.Replace($" font-family=\"{MeasuredFont}\"", "", StringComparison.Ordinal);
        // The page sizes the chart: the viewBox keeps its proportions.
        svg = svg.Replace($"<svg width=\"{width}\" height=\"{height}\"", "<svg", StringComparison.Ordinal);
        return SvgFragment.AddRootAttributes(svg,
            $" id=\"{id}\" class=\"chart\" role=\"img\" aria-label=\"{Html.Attribute(label)}\" preserveAspectRatio=\"xMidYMid meet\"");
    }

    private static string Placeholder(Ink ink)
    {
        var c = Color(ink);
        return $"rgb({c.R},{c.G},{c.B})";
    }
}
