namespace CellCompiler.Rendering;

/// <summary>A point in SVG user units.</summary>
public readonly record struct Point(double X, double Y);

/// <summary>An axis-aligned box in SVG user units (X, Y its top-left corner).</summary>
public readonly record struct Box(double X, double Y, double Width, double Height)
{
    public double Right => X + Width;
    public double Bottom => Y + Height;
    public Point Centre => new(X + Width / 2, Y + Height / 2);

    public static Box Around(Point centre, double width, double height) =>
        new(centre.X - width / 2, centre.Y - height / 2, width, height);

    /// <summary>The boxes share some area (touching edges do not count).</summary>
    public bool Intersects(Box other) =>
        X < other.Right && other.X < Right && Y < other.Bottom && other.Y < Bottom;

    public bool Contains(Box inner) =>
        inner.X >= X && inner.Y >= Y && inner.Right <= Right && inner.Bottom <= Bottom;

    public Box Offset(double dx, double dy) => this with { X = X + dx, Y = Y + dy };
}

/// <summary>
/// Upper bounds on the width of text as the pictures set it, so that layout never has to measure
/// fonts: the pictures ask for Liberation Sans (Arial's metrics) or DejaVu Sans, and DejaVu Sans Mono
/// or Liberation Mono for edge labels. Monospace advances are 0.60 to 0.61 em in those fonts; the
/// bounds below add a margin, and sans text is bounded by 0.62 em a character (0.68 em bold).
/// The cell-picture tests check the bounds in Chromium with the fonts' real metrics.
/// </summary>
public static class TextMetrics
{
    public static double Mono(string text, double fontSize) => text.Length * fontSize * 0.62;

    public static double Sans(string text, double fontSize, bool bold = false) => text.Length * fontSize * (bold ? 0.68 : 0.62);

    public const string SansFamily = "\"Liberation Sans\", Arial, \"DejaVu Sans\", sans-serif";
    public const string MonoFamily = "\"DejaVu Sans Mono\", \"Liberation Mono\", monospace";
}
