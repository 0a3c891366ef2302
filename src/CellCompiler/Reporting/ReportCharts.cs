using CellCompiler.Screening;
using OxyPlot;
using OxyPlot.Axes;
using OxyPlot.Legends;
using OxyPlot.Series;

namespace CellCompiler.Reporting;

/// <summary>
/// The report's charts as OxyPlot models, drawn in placeholder <see cref="Ink"/> colours for
/// <see cref="ChartSvg"/>: params against MACs and against latency p50 (ok and over-budget
/// candidates, the Pareto front of the ok ones as large diamonds joined by its staircase), and
/// histograms of params and MACs (ok stacked under over budget). An axis is logarithmic when its
/// values span a factor of 10 or more.
/// </summary>
public static class ReportCharts
{
    private const int Bins = 24;

    public static PlotModel ParamsVsMacs(ResultsSummary summary, int pointLimit) =>
        Scatter(summary.Points, p => p.Macs, "MACs", Html.Scaled, summary.ParamsVsMacs, pointLimit);

    public static PlotModel ParamsVsLatency(ResultsSummary summary, int pointLimit) =>
        Scatter(summary.Points.Where(p => p.HasLatency).ToList(), p => p.LatencyMs, "latency p50 at batch 1 (ms)",
            Html.MillisecondTick, summary.ParamsVsLatency, pointLimit);

    public static PlotModel ParamsHistogram(ResultsSummary summary) =>
        Histogram(summary.Points, p => p.Params, "params");

    public static PlotModel MacsHistogram(ResultsSummary summary) =>
        Histogram(summary.Points, p => p.Macs, "MACs");

    /// <summary>Every k-th point, so that at most <paramref name="limit"/> are drawn (the front is always drawn).</summary>
    public static IReadOnlyList<ChartPoint> Thin(IReadOnlyList<ChartPoint> points, int limit)
    {
        if (points.Count <= limit) return points;
        var step = (points.Count + limit - 1) / limit;
        var kept = new List<ChartPoint>(limit);
        for (var i = 0; i < points.Count; i += step) kept.Add(points[i]);
        return kept;
    }

    private static PlotModel Scatter(IReadOnlyList<ChartPoint> points, Func<ChartPoint, double> y, string yTitle,
        Func<double, string> yFormat, ParetoFront front, int pointLimit)
    {
        var model = NewModel();
        var frontPoints = front.Points;
        model.Axes.Add(ValueAxis(AxisPosition.Bottom, "params", points.Select(p => p.Params), Html.Scaled));
        model.Axes.Add(ValueAxis(AxisPosition.Left, yTitle, points.Select(y), yFormat));

        var drawn = Thin(points, pointLimit);
        var over = Markers("over budget", Ink.Over, MarkerType.Circle, 3.2);
        var ok = Markers("ok", Ink.Ok, MarkerType.Circle, 3.2);
        foreach (var p in drawn)
            (p.Status == CheckStatus.Ok ? ok : over).Points.Add(new ScatterPoint(p.Params, y(p)));
        if (over.Points.Count > 0) model.Series.Add(over);
        if (ok.Points.Count > 0) model.Series.Add(ok);

        if (frontPoints.Count > 0)
        {
            var staircase = new LineSeries
            {
                Color = ChartSvg.Color(Ink.Front),
                StrokeThickness = 1.6,
                LineStyle = LineStyle.Solid,
                RenderInLegend = false,
            };
            for (var i = 0; i < frontPoints.Count; i++)
            {
                if (i > 0) staircase.Points.Add(new DataPoint(frontPoints[i].X, frontPoints[i - 1].Y));
                staircase.Points.Add(new DataPoint(frontPoints[i].X, frontPoints[i].Y));
            }
            model.Series.Add(staircase);
            var diamonds = new ScatterSeries
            {
                Title = "Pareto front of ok",
                MarkerType = MarkerType.Diamond,
                MarkerSize = 6,
                MarkerFill = ChartSvg.Color(Ink.Front),
                MarkerStroke = ChartSvg.Color(Ink.Text),
                MarkerStrokeThickness = 0.8,
            };
            foreach (var p in frontPoints) diamonds.Points.Add(new ScatterPoint(p.X, p.Y));
            model.Series.Add(diamonds);
        }
        if (points.Count == 0) model.Subtitle = "no candidate has these figures";
        return model;
    }

    private static PlotModel Histogram(IReadOnlyList<ChartPoint> points, Func<ChartPoint, double> value, string title)
    {
        var model = NewModel();
        var values = points.Select(value).ToList();
        var (edges, logarithmic) = BinEdges(values);
        Axis x = logarithmic
            ? new LogarithmicAxis { Position = AxisPosition.Bottom, Title = title, LabelFormatter = Html.Scaled }
            : new LinearAxis { Position = AxisPosition.Bottom, Title = title, LabelFormatter = Html.Scaled };
        if (values.Count > 0 && edges.Length == 2)
        {
            // One value only: a narrow bar in a wider range, so that it reads as one value.
            var width = edges[1] - edges[0];
            x.Minimum = edges[0] - 4 * width;
            x.Maximum = edges[1] + 4 * width;
        }
        model.Axes.Add(x);
        model.Axes.Add(new LinearAxis
        {
            Position = AxisPosition.Left,
            Title = "candidates",
            Minimum = 0,
            MinimumMajorStep = 1,
            MinimumMinorStep = 1,
            MaximumPadding = 0.08,
            StringFormat = "#,0",
        });
        foreach (var axis in model.Axes) Style(axis);

        var all = new long[edges.Length - 1];
        var ok = new long[edges.Length - 1];
        foreach (var p in points)
        {
            var bin = Bin(edges, value(p));
            all[bin]++;
            if (p.Status == CheckStatus.Ok) ok[bin]++;
        }
        // Drawn in order, the ok bars cover the lower part of the bars of all candidates: a stacked look.
        if (points.Any(p => p.Status != CheckStatus.Ok)) model.Series.Add(Bars("over budget", Ink.Over, edges, all));
        if (points.Any(p => p.Status == CheckStatus.Ok)) model.Series.Add(Bars("ok", Ink.Ok, edges, ok));
        if (points.Count == 0) model.Subtitle = "no candidate has this figure";
        return model;
    }

    private static HistogramSeries Bars(string title, Ink ink, double[] edges, long[] counts)
    {
        var series = new HistogramSeries
        {
            Title = title,
            FillColor = ChartSvg.Color(ink, 230),
            StrokeColor = ChartSvg.Color(ink),
            StrokeThickness = 0.8,
        };
        for (var i = 0; i < counts.Length; i++)
            if (counts[i] > 0)
                series.Items.Add(new HistogramItem(edges[i], edges[i + 1], counts[i] * (edges[i + 1] - edges[i]), (int)Math.Min(counts[i], int.MaxValue)));
        return series;
    }

    /// <summary>Bin edges: uniform, or uniform in log scale when the values span a factor of 10 or more.</summary>
    public static (double[] Edges, bool Logarithmic) BinEdges(IReadOnlyList<double> values)
    {
        if (values.Count == 0) return ([0, 1], false);
        var min = values.Min();
        var max = values.Max();
        if (min == max)
        {
            var half = Math.Max(Math.Abs(min) * 0.02, 0.5);
            return ([min - half, max + half], false);
        }
        var edges = new double[Bins + 1];
        var logarithmic = min > 0 && max / min >= 10;
        for (var i = 0; i <= Bins; i++)
            edges[i] = logarithmic
                ? Math.Exp(Math.Log(min) + (Math.Log(max) - Math.Log(min)) * i / Bins)
                : min + (max - min) * i / Bins;
        edges[0] = min;
        edges[Bins] = max;
        return (edges, logarithmic);
    }

    private static int Bin(double[] edges, double v)
    {
        var i = Array.BinarySearch(edges, v);
        if (i < 0) i = ~i - 1;
        return Math.Clamp(i, 0, edges.Length - 2);
    }

    private static PlotModel NewModel()
    {
        var model = new PlotModel
        {
            Background = OxyColors.Transparent,
            TextColor = ChartSvg.Color(Ink.Text),
            PlotAreaBorderColor = ChartSvg.Color(Ink.Axis),
            PlotAreaBorderThickness = new OxyThickness(0, 0, 0, 0),
            DefaultFont = ChartSvg.MeasuredFont,
            DefaultFontSize = 12,
            SubtitleColor = ChartSvg.Color(Ink.Text),
            Padding = new OxyThickness(8, 6, 16, 8),
        };
        model.Legends.Add(new Legend
        {
            LegendPlacement = LegendPlacement.Outside,
            LegendPosition = LegendPosition.TopRight,
            LegendOrientation = LegendOrientation.Horizontal,
            LegendBackground = OxyColors.Transparent,
            LegendBorder = OxyColors.Transparent,
            LegendTextColor = ChartSvg.Color(Ink.Text),
            LegendFontSize = 12,
            LegendSymbolLength = 18,
            LegendItemSpacing = 14,
            LegendPadding = 2,
            LegendMargin = 4,
        });
        return model;
    }

    private static Axis ValueAxis(AxisPosition position, string title, IEnumerable<double> values, Func<double, string> format)
    {
        var list = values.ToList();
        var logarithmic = list.Count > 0 && list.Min() > 0 && list.Max() / list.Min() >= 10;
        Axis axis = logarithmic ? new LogarithmicAxis() : new LinearAxis();
        axis.Position = position;
        axis.Title = title;
        axis.LabelFormatter = format;
        axis.MinimumPadding = 0.06;
        axis.MaximumPadding = 0.06;
        axis.MajorGridlineStyle = LineStyle.Solid;
        Style(axis);
        return axis;
    }

    private static void Style(Axis axis)
    {
        axis.AxislineStyle = LineStyle.Solid;
        axis.AxislineColor = ChartSvg.Color(Ink.Axis);
        axis.TicklineColor = ChartSvg.Color(Ink.Axis);
        axis.MinorTicklineColor = ChartSvg.Color(Ink.Axis);
        axis.MajorGridlineColor = ChartSvg.Color(Ink.Grid);
        axis.MinorGridlineStyle = LineStyle.None;
        axis.TextColor = ChartSvg.Color(Ink.Text);
        axis.TitleColor = ChartSvg.Color(Ink.Text);
        axis.TitleFontSize = 12.5;
        axis.TickStyle = TickStyle.Outside;
        if (axis.MajorGridlineStyle == LineStyle.None && axis.Position == AxisPosition.Left)
            axis.MajorGridlineStyle = LineStyle.Solid;
        axis.IsZoomEnabled = false;
        axis.IsPanEnabled = false;
    }

    private static ScatterSeries Markers(string title, Ink ink, MarkerType type, double size) => new()
    {
        Title = title,
        MarkerType = type,
        MarkerSize = size,
        MarkerFill = ChartSvg.Color(ink, 170),
        MarkerStroke = ChartSvg.Color(ink),
        MarkerStrokeThickness = 0.8,
    };
}
