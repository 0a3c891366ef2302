using OxyPlot;

namespace CellCompiler.Reporting;

/// <summary>
/// Measures chart text for OxyPlot's SVG exporter in SVG pixels. OxyPlot's managed measurer
/// (<see cref="PdfRenderContext"/>, Helvetica metrics) works in PDF points, 3/4 of a pixel, so its
/// sizes come out a quarter too small for an SVG drawn in pixels; this asks it for the size at 4/3 of
/// the font size. Helvetica's metrics are those of Arial and Liberation Sans, the fonts the page
/// gives chart text. It draws nothing.
/// </summary>
public sealed class ChartTextMeasurer : RenderContextBase
{
    private const double PixelsPerPoint = 4.0 / 3.0;
    private readonly PdfRenderContext _pdf = new(ChartSvg.Width, ChartSvg.Height, OxyColors.Transparent);

    public override OxySize MeasureText(string text, string fontFamily, double fontSize, double fontWeight) =>
        _pdf.MeasureText(text, fontFamily, fontSize * PixelsPerPoint, fontWeight);

    public override void DrawLine(IList<ScreenPoint> points, OxyColor stroke, double thickness, EdgeRenderingMode edgeRenderingMode,
        double[] dashArray, LineJoin lineJoin) { }

    public override void DrawPolygon(IList<ScreenPoint> points, OxyColor fill, OxyColor stroke, double thickness,
        EdgeRenderingMode edgeRenderingMode, double[] dashArray, LineJoin lineJoin) { }

    public override void DrawText(ScreenPoint p, string text, OxyColor fill, string fontFamily, double fontSize, double fontWeight,
        double rotation, HorizontalAlignment halign, VerticalAlignment valign, OxySize? maxSize) { }

    public override int ClipCount => 0;

    public override void PushClip(OxyRect clippingRectangle) { }

    public override void PopClip() { }
}
