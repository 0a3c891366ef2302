using System.Globalization;
using System.Text.RegularExpressions;
using System.Xml.Linq;
using CellCompiler.Input;
using CellCompiler.Rendering;
using CellCompiler.Tests.Support;

namespace CellCompiler.Tests;

/// <summary>`cellc demo` run once through the real process: its report and pictures are what the screenshot tests look at.</summary>
public sealed class DemoFolder : IDisposable
{
    public TempFolder Folder { get; } = new();

    public string Demo { get; }

    public DemoFolder()
    {
        Demo = Folder.File("demo");
        var result = ProcessRunner.Cellc(["demo", "--dir", Demo], null, Folder.Path);
        Assert.True(result.ExitCode == 0, $"cellc demo exited {result.ExitCode}: {result.Stderr}");
    }

    public void Dispose() => Folder.Dispose();
}

/// <summary>
/// The done-when of issue 14: headless-Chromium screenshots of the demo report and of three cell
/// pictures, light and dark, made by the test run (in screenshots/ beside the test assembly), and
/// checked in the browser where a program can check: with the fonts' real metrics, no edge label
/// overlaps another (or another's background) and every text lies within its picture; every text on
/// the page and in the pictures reaches 4.5:1 against what is painted under it (WCAG 2, computed in
/// the page); no text is transparent; the report shows the run's budgets as lines and lists and draws
/// every front its charts show; the dark screenshots are darker than the light ones (OpenCV).
/// </summary>
public sealed class PictureScreenshotTests(DemoFolder demo) : IClassFixture<DemoFolder>
{
    /// <summary>The three pictures: a three-level cell, a flat 11-node cell, and a dense generated cell with dead code and every kind.</summary>
    private IEnumerable<(string Name, string Svg)> Pictures()
    {
        yield return ("tidepool-reef", File.ReadAllText(Path.Combine(demo.Demo, "pictures", "tidepool-reef.svg")));
        yield return ("tidepool-kelp", File.ReadAllText(Path.Combine(demo.Demo, "pictures", "tidepool-kelp.svg")));
        var dense = RenderLayoutTests.DenseCells(perShape: 2)
            .First(g => RenderModel.Build(g) is { HasDead: true } m && m.Families.Count >= 5 && m.Panels.Count > 1);
        yield return ("dense-" + dense.Id, CellRenderer.Svg(dense));
    }

    [Fact]
    public void Three_cell_pictures_light_and_dark_read_cleanly_in_Chromium()
    {
        using var folder = new TempFolder();
        var brightness = new Dictionary<string, double>();
        foreach (var (name, svg) in Pictures())
        {
            var root = XDocument.Parse(svg).Root!;
            var width = (int)Math.Ceiling(double.Parse((string)root.Attribute("width")!, CultureInfo.InvariantCulture)) + 16;
            var height = (int)Math.Ceiling(double.Parse((string)root.Attribute("height")!, CultureInfo.InvariantCulture)) + 16;
            var page = folder.Write($"{name}.html",
                $"<!DOCTYPE html><html><head><meta charset=\"utf-8\"><style>body{{margin:8px}}</style></head><body>{svg}{PictureBrowser.CheckScript}</body></html>");
            foreach (var dark in new[] { false, true })
            {
                var theme = dark ? "dark" : "light";
                var check = PictureBrowser.Check(page, dark);
                check.AssertClean($"{name} ({theme})");
                Assert.Equal(1, check.Pictures);
                Assert.True(check.Labels > 0, $"{name}: no edge label was measured");
                var png = PictureBrowser.Screenshot(page, $"picture-{name}-{theme}.png", width, height, dark);
                brightness[$"{name}-{theme}"] = PictureBrowser.MeanBrightness(png);
            }
            Assert.True(brightness[$"{name}-dark"] + 60 < brightness[$"{name}-light"],
                $"{name}: the dark screenshot ({brightness[$"{name}-dark"]:0}) is not darker than the light one ({brightness[$"{name}-light"]:0})");
        }
    }

    [Fact]
    public void The_demo_report_light_dark_and_toggled_reads_cleanly_shows_budgets_and_lists_and_draws_every_front()
    {
        var report = Path.Combine(demo.Demo, "report.html");
        var html = File.ReadAllText(report);

        // The title says what the page shows: a freshly sampled population, not a search generation.
        Assert.Contains("freshly sampled", Regex.Match(html, "<h1>(.*?)</h1>").Groups[1].Value);
        Assert.DoesNotContain("generation", Regex.Match(html, "<h1>(.*?)</h1>").Groups[1].Value);

        // Budgets: the demo screens with --max-params and --max-macs; each is a labelled dashed line where its figure is charted.
        foreach (var (chart, option) in new[] { ("chart-params-macs", "--max-params"), ("chart-params-macs", "--max-macs"),
                     ("chart-latency-macs", "--max-macs"), ("chart-params-latency", "--max-params"), ("chart-params-hist", "--max-params"), ("chart-macs-hist", "--max-macs") })
        {
            var figure = Regex.Match(html, $"<figure[^>]*data-budgets=\"([^\"]*)\">\\s*<figcaption><strong id=\"{chart}-title\".*?</figure>", RegexOptions.Singleline);
            Assert.True(figure.Success, $"no {chart}");
            Assert.Contains(option, figure.Groups[1].Value.Split(' '));
            Assert.Contains("stroke:var(--ink-budget)", figure.Value);
            Assert.Matches($">\\s*{Regex.Escape(option)} [0-9]", figure.Value);
        }
        // The charts lead with latency against MACs; params against MACs is small.
        var chartOrder = Regex.Matches(html, "<strong id=\"(chart-[a-z-]+)-title\"").Select(m => m.Groups[1].Value).ToList();
        Assert.Equal("chart-latency-macs", chartOrder[0]);
        Assert.Matches("<figure class=\"chart-card small\"[^>]*>\\s*<figcaption><strong id=\"chart-params-macs-title\"", html);

        // Every front a chart shows is listed, and each of its cells has a card with its picture.
        var fronts = Regex.Matches(html, "<figure class=\"chart-card[^\"]*\"[^>]*data-front=\"([a-z0-9-]+)\"").Select(m => m.Groups[1].Value).Distinct().ToList();
        Assert.Equal(["macs-latency", "params-latency", "params-macs"], fronts.Order());
        foreach (var front in fronts)
        {
            var table = Regex.Match(html, $"<table class=\"front-list\" data-front=\"{front}\">(.*?)</table>", RegexOptions.Singleline);
            Assert.True(table.Success, $"the front {front} is charted but not listed");
            var ids = Regex.Matches(table.Groups[1].Value, "<tr data-id=\"([^\"]+)\"").Select(m => m.Groups[1].Value).ToList();
            Assert.NotEmpty(ids);
            foreach (var id in ids)
            {
                Assert.Matches($"<article class=\"front-card drawn\"[^>]*data-id=\"{Regex.Escape(id)}\"[^>]*data-fronts=\"[^\"]*{front}", html);
                Assert.Matches($"<figure class=\"cell-picture\" data-id=\"{Regex.Escape(id)}\"><svg", html);
                Assert.True(File.Exists(Path.Combine(demo.Demo, "pictures", $"front-{id}.svg")), $"the demo wrote no picture of front cell {id}");
            }
        }

        using var folder = new TempFolder();
        var checkedPage = folder.Write("report.html", html.Replace("</body>", PictureBrowser.CheckScript + "</body>", StringComparison.Ordinal));
        // The page's own theme switch, set to dark on a light system: pictures follow the page, not the system.
        var toggled = folder.Write("report-toggled.html", html.Replace("<html lang=\"en\">", "<html lang=\"en\" data-theme=\"dark\">", StringComparison.Ordinal)
            .Replace("</body>", PictureBrowser.CheckScript + "</body>", StringComparison.Ordinal));
        var brightness = new Dictionary<string, double>();
        foreach (var (page, theme, dark) in new[] { (checkedPage, "light", false), (checkedPage, "dark", true), (toggled, "toggled-dark", false) })
        {
            var check = PictureBrowser.Check(page, dark);
            check.AssertClean($"demo report ({theme})");
            Assert.True(check.Pictures >= 1, "the report shows no cell picture");
            var png = PictureBrowser.Screenshot(page, $"demo-report-{theme}.png", 1280, 7000, dark);
            brightness[theme] = PictureBrowser.MeanBrightness(png);
        }
        Assert.True(brightness["dark"] + 60 < brightness["light"], $"dark {brightness["dark"]:0} vs light {brightness["light"]:0}");
        Assert.True(brightness["toggled-dark"] + 60 < brightness["light"], $"toggled {brightness["toggled-dark"]:0} vs light {brightness["light"]:0}");
    }

    [Fact]
    public void The_readme_shows_a_picture_that_is_the_current_rendering_of_the_demo_cell()
    {
        var readme = File.ReadAllText(Path.Combine(RepoPaths.Root, "README.md"));
        var image = Regex.Match(readme, @"!\[[^\]]*\]\((docs/[^)]+\.svg)\)");
        Assert.True(image.Success, "the README shows no picture under docs/");
        var committed = File.ReadAllText(Path.Combine(RepoPaths.Root, image.Groups[1].Value));
        var genotype = GenotypeReader.Parse(Demo.DemoData.ReefCell, "demo", "demo");
        Assert.Equal(CellRenderer.Svg(genotype), committed);
    }
}
