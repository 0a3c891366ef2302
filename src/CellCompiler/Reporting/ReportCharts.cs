using CellCompiler.Screening;
using OxyPlot;
using OxyPlot.Annotations;
using OxyPlot.Axes;
using OxyPlot.Legends;
using OxyPlot.Series;

namespace CellCompiler.Reporting;

/// <summary>
/// The report's charts as OxyPlot models, drawn in placeholder <see cref="Ink"/> colours for
/// <see cref="ChartSvg"/>. Scatter plots of one measure against another: ok, over_budget and broken
/// candidates in their status colours and also in their own marker shapes (circle, square,
/// triangle), trivial cells as hollow circles when they are left out of the fronts, the front as
/// large diamonds joined by its staircase, and the budgets of the run as labelled dashed lines, so
/// the cut is seen rather than inferred from colours. Histograms stack ok under over_budget under
/// broken, with the budget as a line. An axis is logarithmic when its values span a factor of 10 or
/// more; an axis always reaches its budget.
/// </summary>
public static class ReportCharts
{
    private const int Bins = 24;

    /// <summary>A chart of <paramref name="y"/> against <paramref name="x"/> with the given front (or none); with a diagonal for predicted against measured.</summary>
    public static PlotModel Scatter(ResultsSummary summary, Measure x, Measure y, FrontSpec? front, int pointLimit, bool diagonal = false)
    {
        var model = NewModel();
        var points = summary.Points.Where(p => !double.IsNaN(x.Of(p)) && !double.IsNaN(y.Of(p))).ToList();
        var xBudget = x.BudgetIn(summary.Budgets);
        var yBudget = y.BudgetIn(summary.Budgets);
        var xValues = points.Select(x.Of).ToList();
        var yValues = points.Select(y.Of).ToList();
        if (diagonal)
        {
            // One scale for both axes, so that the diagonal is the line of perfect prediction.
            xValues = yValues = xValues.Concat(yValues).ToList();
            xBudget ??= yBudget;
            yBudget ??= xBudget;
        }
        model.Axes.Add(ValueAxis(AxisPosition.Bottom, x.Label, xValues, xBudget, x.Tick));
        model.Axes.Add(ValueAxis(AxisPosition.Left, y.Label, yValues, yBudget, y.Tick));

        var trivialApart = !summary.IncludeTrivial;
        var ok = Markers(CheckStatus.Ok.Name(), Ink.Ok, MarkerType.Circle, 3.2);
        var over = Markers(CheckStatus.OverBudget.Name(), Ink.Over, MarkerType.Square, 2.9);
        var broken = Markers(CheckStatus.Broken.Name(), Ink.Broken, MarkerType.Triangle, 3.6);
        var trivial = Markers("trivial cell (left out of fronts)", Ink.Ok, MarkerType.Circle, 3.4);
        trivial.MarkerFill = OxyColors.Transparent;
        trivial.MarkerStrokeThickness = 1.3;
        foreach (var p in Thin(points, pointLimit))
        {
            var series = p.Status switch
            {
                CheckStatus.Ok when p.Trivial && trivialApart => trivial,
                CheckStatus.Ok => ok,
                CheckStatus.OverBudget => over,
                _ => broken,
            };
            series.Points.Add(new ScatterPoint(x.Of(p), y.Of(p)));
        }
        foreach (var series in new[] { over, broken, trivial, ok })
            if (series.Points.Count > 0) model.Series.Add(series);

        if (diagonal && xValues.Count > 0)
        {
            var (low, high) = (xValues.Min(), xValues.Max());
            model.Series.Add(new LineSeries
            {
                Title = "predicted = measured",
                Color = ChartSvg.Color(Ink.Axis),
                StrokeThickness = 1.2,
                LineStyle = LineStyle.Dash,
                Points = { new DataPoint(low, low), new DataPoint(high, high) },
            });
        }
        if (front is not null) AddFront(model, front.Members);
        if (xBudget is { } xb) model.Annotations.Add(BudgetLine(LineAnnotationType.Vertical, xb, x));
        // Predicted against measured: one budget on both axes, named once.
        if (yBudget is { } yb) model.Annotations.Add(BudgetLine(LineAnnotationType.Horizontal, yb, y, labelled: !(diagonal && xBudget is not null)));
        if (points.Count == 0) model.Subtitle = "no candidate has these figures";
        return model;
    }

    /// <summary>The budget lines a scatter or histogram of these measures draws (for the page's captions and tests).</summary>
    public static IReadOnlyList<string> BudgetOptions(ResultsSummary summary, params Measure[] measures) =>
        measures.Where(m => m.BudgetIn(summary.Budgets) is not null).Select(m => m.BudgetOption!).Distinct().ToList();

    private static void AddFront(PlotModel model, IReadOnlyList<FrontMember> members)
    {
        if (members.Count == 0) return;
        var staircase = new LineSeries
        {
            Color = ChartSvg.Color(Ink.Front),
            StrokeThickness = 1.6,
            LineStyle = LineStyle.Solid,
            RenderInLegend = false,
        };
        for (var i = 0; i < members.Count; i++)
        {
            if (i > 0) staircase.Points.Add(new DataPoint(members[i].X, members[i - 1].Y));
            staircase.Points.Add(new DataPoint(members[i].X, members[i].Y));
        }
        model.Series.Add(staircase);
        var diamonds = new ScatterSeries
        {
            Title = "Pareto front",
            MarkerType = MarkerType.Diamond,
            MarkerSize = 6,
            MarkerFill = ChartSvg.Color(Ink.Front),
            MarkerStroke = ChartSvg.Color(Ink.Text),
            MarkerStrokeThickness = 0.8,
        };
        foreach (var m in members) diamonds.Points.Add(new ScatterPoint(m.X, m.Y));
        model.Series.Add(diamonds);
    }

    private static LineAnnotation BudgetLine(LineAnnotationType type, double value, Measure measure, bool labelled = true) => new()
    {
        Type = type,
        X = type == LineAnnotationType.Vertical ? value : 0,
        Y = type == LineAnnotationType.Horizontal ? value : 0,
        Color = ChartSvg.Color(Ink.Budget),
        StrokeThickness = 1.4,
        LineStyle = LineStyle.LongDash,
        Text = labelled ? $"{measure.BudgetOption} {measure.Show(value)}" : "",
        TextColor = ChartSvg.Color(Ink.Budget),
        FontSize = 11,
        TextHorizontalAlignment = HorizontalAlignment.Right,
        TextVerticalAlignment = VerticalAlignment.Top,
        TextOrientation = type == LineAnnotationType.Vertical ? AnnotationTextOrientation.Vertical : AnnotationTextOrientation.Horizontal,
        TextLinePosition = 1,
        TextMargin = 4,
    };

    /// <summary>How many candidates fall in each range of the measure, stacked by status, with the measure's budget as a line.</summary>
    public static PlotModel Histogram(ResultsSummary summary, Measure measure)
    {
        var model = NewModel();
        var points = summary.Points.Where(p => !double.IsNaN(measure.Of(p))).ToList();
        var values = points.Select(measure.Of).ToList();
        var budget = measure.BudgetIn(summary.Budgets);
        var (edges, logarithmic) = BinEdges(values);
        Axis x = logarithmic
            ? new LogarithmicAxis { Position = AxisPosition.Bottom, Title = measure.Label, LabelFormatter = measure.Tick }
            : new LinearAxis { Position = AxisPosition.Bottom, Title = measure.Label, LabelFormatter = measure.Tick };
        if (values.Count > 0 && edges.Length == 2)
        {
            // One value only: a narrow bar in a wider range, so that it reads as one value.
            var width = edges[1] - edges[0];
            x.Minimum = edges[0] - 4 * width;
            x.Maximum = edges[1] + 4 * width;
        }
        if (budget is { } b && values.Count > 0)
        {
            // The axis reaches the budget, so the cut is on the chart even when every candidate is on one side.
            var (low, high) = Padded(Math.Min(double.IsNaN(x.Minimum) ? edges[0] : x.Minimum, b), Math.Max(double.IsNaN(x.Maximum) ? edges[^1] : x.Maximum, b), logarithmic);
            x.Minimum = low;
            x.Maximum = high;
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
            MajorGridlineStyle = LineStyle.Solid,
        });
        foreach (var axis in model.Axes) Style(axis);

        // Drawn in order, each status's bars cover the lower part of the ones before: a stacked look.
        var stacks = new[] { CheckStatus.Broken, CheckStatus.OverBudget, CheckStatus.Ok };
        for (var level = 0; level < stacks.Length; level++)
        {
            var included = stacks[level..];
            var counts = new long[edges.Length - 1];
            foreach (var p in points)
                if (included.Contains(p.Status)) counts[Bin(edges, measure.Of(p))]++;
            if (points.Any(p => p.Status == stacks[level]))
                model.Series.Add(Bars(stacks[level].Name(), InkOf(stacks[level]), edges, counts));
        }
        if (budget is { } line) model.Annotations.Add(BudgetLine(LineAnnotationType.Vertical, line, measure));
        if (points.Count == 0) model.Subtitle = "no candidate has this figure";
        return model;
    }

    private static Ink InkOf(CheckStatus status) => status switch
    {
        CheckStatus.Ok => Ink.Ok,
        CheckStatus.OverBudget => Ink.Over,
        CheckStatus.Broken => Ink.Broken,
        _ => throw new ArgumentOutOfRangeException(nameof(status), status, "invalid candidates have no figures to chart"),
    };

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

    /// <summary>Every k-th point, so that at most <paramref name="limit"/> are drawn (the front is always drawn).</summary>
    public static IReadOnlyList<ChartPoint> Thin(IReadOnlyList<ChartPoint> points, int limit)
    {
        if (points.Count <= limit) return points;
        var step = (points.Count + limit - 1) / limit;
        var kept = new List<ChartPoint>(limit);
        for (var i = 0; i < points.Count; i += step) kept.Add(points[i]);
        return kept;
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
        var logarithmic = IsLogarithmic(min, max);
        for (var i = 0; i <= Bins; i++)
            edges[i] = logarithmic
                ? Math.Exp(Math.Log(min) + (Math.Log(max) - Math.Log(min)) * i / Bins)
                : min + (max - min) * i / Bins;
        edges[0] = min;
        edges[Bins] = max;
        return (edges, logarithmic);
    }

    private static bool IsLogarithmic(double min, double max) => min > 0 && max / min >= 10;

    private static int Bin(double[] edges, double v)
    {
        var i = Array.BinarySearch(edges, v);
        if (i < 0) i = ~i - 1;
        return Math.Clamp(i, 0, edges.Length - 2);
    }

    /// <summary>A range with 6% room on each side (in log space for a logarithmic axis).</summary>
    private static (double Low, double High) Padded(double min, double max, bool logarithmic)
    {
        if (logarithmic && min > 0)
        {
            var (lo, hi) = (Math.Log10(min), Math.Log10(max));
            var pad = Math.Max((hi - lo) * 0.06, 0.02);
            return (Math.Pow(10, lo - pad), Math.Pow(10, hi + pad));
        }
        var room = max > min ? (max - min) * 0.06 : Math.Max(Math.Abs(min) * 0.05, 0.5);
        return (min - room, max + room);
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

    /// <summary>A value axis over the values and the budget (if any), logarithmic when they span a factor of 10.</summary>
    private static Axis ValueAxis(AxisPosition position, string title, IReadOnlyList<double> values, double? budget, Func<double, string> format)
    {
        var all = budget is { } b ? values.Append(b).ToList() : values.ToList();
        var logarithmic = all.Count > 0 && IsLogarithmic(all.Min(), all.Max());
        Axis axis = logarithmic ? new LogarithmicAxis() : new LinearAxis();
        axis.Position = position;
        axis.Title = title;
        axis.LabelFormatter = format;
        axis.MajorGridlineStyle = LineStyle.Solid;
        if (all.Count > 0 && budget is not null)
        {
            (axis.Minimum, axis.Maximum) = Padded(all.Min(), all.Max(), logarithmic);
        }
        else
        {
            axis.MinimumPadding = 0.06;
            axis.MaximumPadding = 0.06;
        }
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
