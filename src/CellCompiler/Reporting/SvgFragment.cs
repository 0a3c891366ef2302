using System.Text.RegularExpressions;

namespace CellCompiler.Reporting;

/// <summary>
/// Makes a standalone SVG document fit inside an HTML page: no XML declaration or doctype, ids
/// prefixed so that several pictures on one page never share one (references to them follow), and a
/// viewBox so that the picture scales with its container.
/// </summary>
public static partial class SvgFragment
{
    public static string Inline(string svg, string idPrefix)
    {
        svg = XmlDeclaration().Replace(svg, "");
        svg = Doctype().Replace(svg, "");
        svg = svg.Trim();
        var ids = IdAttribute().Matches(svg).Select(m => m.Groups[2].Value).ToHashSet(StringComparer.Ordinal);
        if (ids.Count > 0)
        {
            svg = IdAttribute().Replace(svg, m => $"{m.Groups[1].Value}\"{idPrefix}{m.Groups[2].Value}\"");
            svg = UrlReference().Replace(svg, m => ids.Contains(m.Groups[1].Value) ? $"url(#{idPrefix}{m.Groups[1].Value})" : m.Value);
            svg = HrefReference().Replace(svg, m => ids.Contains(m.Groups[2].Value) ? $"{m.Groups[1].Value}\"#{idPrefix}{m.Groups[2].Value}\"" : m.Value);
        }
        return AddViewBox(svg);
    }

    /// <summary>Adds viewBox="0 0 W H" to the root element when it has a numeric width and height but no viewBox.</summary>
    public static string AddViewBox(string svg)
    {
        var root = RootElement().Match(svg);
        if (!root.Success || root.Value.Contains("viewBox", StringComparison.Ordinal)) return svg;
        var width = Dimension("width").Match(root.Value);
        var height = Dimension("height").Match(root.Value);
        if (!width.Success || !height.Success) return svg;
        var tag = root.Value.Insert("<svg".Length, $" viewBox=\"0 0 {width.Groups[1].Value} {height.Groups[1].Value}\"");
        return string.Concat(svg.AsSpan(0, root.Index), tag, svg.AsSpan(root.Index + root.Length));
    }

    /// <summary>Adds attributes (already escaped, e.g. ` class="chart"`) to the root svg element.</summary>
    public static string AddRootAttributes(string svg, string attributes)
    {
        var root = RootElement().Match(svg);
        if (!root.Success) return svg;
        return string.Concat(svg.AsSpan(0, root.Index + "<svg".Length), attributes, svg.AsSpan(root.Index + "<svg".Length));
    }

    private static Regex Dimension(string name) => new($"\\s{name}=\"([0-9]+(?:\\.[0-9]+)?)(?:px)?\"", RegexOptions.CultureInvariant);

    [GeneratedRegex(@"<\?xml[^>]*\?>")]
    private static partial Regex XmlDeclaration();

    [GeneratedRegex(@"<!DOCTYPE[^>]*>", RegexOptions.IgnoreCase)]
    private static partial Regex Doctype();

    [GeneratedRegex(@"(\sid=)""([^""]+)""")]
    private static partial Regex IdAttribute();

    [GeneratedRegex(@"url\(#([^)\s]+)\)")]
    private static partial Regex UrlReference();

    [GeneratedRegex(@"(\s(?:xlink:)?href=)""#([^""]+)""")]
    private static partial Regex HrefReference();

    [GeneratedRegex(@"<svg\b[^>]*>")]
    private static partial Regex RootElement();
}
