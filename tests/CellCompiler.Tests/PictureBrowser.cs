using System.Net;
using System.Text.Json;
using System.Text.RegularExpressions;
using CellCompiler.Tests.Support;

namespace CellCompiler.Tests;

/// <summary>What the in-page check found (see <see cref="PictureBrowser.CheckScript"/>).</summary>
public sealed record PageCheck(
    int Pictures, int Labels, int Texts, double MinRatio,
    IReadOnlyList<string> Overlaps, IReadOnlyList<string> Outside, IReadOnlyList<string> LowContrast,
    IReadOnlyList<string> Transparent, IReadOnlyList<string> Unfitted)
{
    public void AssertClean(string what)
    {
        Assert.True(Texts > 0, $"{what}: no text was checked");
        Assert.True(Overlaps.Count == 0, $"{what}: labels overlap: {string.Join("; ", Overlaps.Take(10))}");
        Assert.True(Outside.Count == 0, $"{what}: text outside its picture: {string.Join("; ", Outside.Take(10))}");
        Assert.True(LowContrast.Count == 0, $"{what}: text below 4.5:1: {string.Join("; ", LowContrast.Take(10))}");
        Assert.True(Transparent.Count == 0, $"{what}: text drawn with transparency: {string.Join("; ", Transparent.Take(10))}");
        Assert.True(Unfitted.Count == 0, $"{what}: label text wider than its background: {string.Join("; ", Unfitted.Take(10))}");
    }
}

/// <summary>
/// Debian's Chromium, headless, as the tests drive it: a fresh profile, no network services
/// (/work/.library's machine notes give these flags), `--force-dark-mode` for the dark theme (it makes
/// `prefers-color-scheme: dark` match). Screenshots go to a folder beside the test assembly.
/// </summary>
public static class PictureBrowser
{
    public const string Chromium = "/usr/bin/chromium";

    public static string ScreenshotFolder { get; } = Directory.CreateDirectory(Path.Combine(AppContext.BaseDirectory, "screenshots")).FullName;

    private static ProcessResult Run(string htmlPath, bool dark, params string[] more)
    {
        Assert.True(File.Exists(Chromium), $"{Chromium} is missing: install Debian's chromium package (apt-get install -y chromium)");
        using var profile = new TempFolder();
        string[] flags =
        [
            "--headless", "--no-sandbox", "--disable-gpu", "--disable-quic", "--no-first-run",
            "--disable-background-networking", "--disable-component-update", "--disable-sync", "--hide-scrollbars",
            $"--user-data-dir={profile.Path}",
        ];
        var result = ProcessRunner.Run(Chromium, [.. flags, .. dark ? ["--force-dark-mode"] : Array.Empty<string>(), .. more, new Uri(htmlPath).AbsoluteUri],
            timeout: TimeSpan.FromMinutes(3));
        Assert.True(result.ExitCode == 0, $"chromium exited {result.ExitCode}: {result.Stderr}");
        return result;
    }

    /// <summary>A PNG of the page at the given window size; returns its path.</summary>
    public static string Screenshot(string htmlPath, string name, int width, int height, bool dark)
    {
        var png = Path.Combine(ScreenshotFolder, name);
        File.Delete(png);
        Run(htmlPath, dark, $"--window-size={width},{height}", $"--screenshot={png}");
        Assert.True(File.Exists(png), $"no screenshot at {png}");
        var bytes = File.ReadAllBytes(png);
        Assert.Equal([0x89, (byte)'P', (byte)'N', (byte)'G'], bytes[..4]);
        return png;
    }

    /// <summary>Loads a page that carries <see cref="CheckScript"/> and returns what the script found.</summary>
    public static PageCheck Check(string htmlPath, bool dark)
    {
        var dom = Run(htmlPath, dark, "--dump-dom").Stdout;
        var found = Regex.Match(dom, "<pre id=\"cellc-check\">(.*?)</pre>", RegexOptions.Singleline);
        Assert.True(found.Success, "the page's check did not run (no pre#cellc-check in the DOM)");
        var json = WebUtility.HtmlDecode(found.Groups[1].Value);
        return JsonSerializer.Deserialize<PageCheck>(json, new JsonSerializerOptions { PropertyNameCaseInsensitive = true })!;
    }

    /// <summary>Mean brightness (0-255) of a PNG's top rows, read with OpenCV (Debian's python3-opencv).</summary>
    public static double MeanBrightness(string png)
    {
        var result = ProcessRunner.Run("/usr/bin/python3",
            ["-c", "import sys, cv2; im = cv2.imread(sys.argv[1], cv2.IMREAD_GRAYSCALE); assert im is not None; print(float(im[:600].mean()))", png],
            timeout: TimeSpan.FromMinutes(1));
        Assert.True(result.ExitCode == 0, $"python3 with OpenCV failed (install Debian's python3-opencv): {result.Stderr}");
        return double.Parse(result.Stdout.Trim(), System.Globalization.CultureInfo.InvariantCulture);
    }

    /// <summary>
    /// Runs on load, in the page: for every text element (HTML and SVG) that shows text, its colour
    /// against what is painted under it (the shape under its centre inside a cell picture; the nearest
    /// opaque background otherwise), with the WCAG 2 contrast formula written again here in JavaScript;
    /// its effective opacity; inside cell pictures (svg.cellc-render), every edge label's box against
    /// every other's and against its background, and every text's box against the picture's. Results go
    /// into pre#cellc-check as JSON.
    /// </summary>
    public const string CheckScript = """
        <script>
        window.addEventListener("load", function () {
          function rgb(text) {
            var m = /rgba?\(([^)]+)\)/.exec(text || "");
            if (!m) return null;
            var p = m[1].split(",").map(function (v) { return parseFloat(v); });
            return { r: p[0], g: p[1], b: p[2], a: p.length > 3 ? p[3] : 1 };
          }
          function lum(c) {
            function f(v) { v /= 255; return v <= 0.03928 ? v / 12.92 : Math.pow((v + 0.055) / 1.055, 2.4); }
            return 0.2126 * f(c.r) + 0.7152 * f(c.g) + 0.0722 * f(c.b);
          }
          function ratio(a, b) { var x = lum(a), y = lum(b); return (Math.max(x, y) + 0.05) / (Math.min(x, y) + 0.05); }
          function opacity(el) { var o = 1; for (var e = el; e && e.nodeType === 1; e = e.parentNode) o *= parseFloat(getComputedStyle(e).opacity); return o; }
          function htmlBackground(el) {
            for (var e = el; e && e.nodeType === 1; e = e.parentNode) {
              var b = rgb(getComputedStyle(e).backgroundColor);
              if (b && b.a === 1) return b;
            }
            return { r: 255, g: 255, b: 255, a: 1 };
          }
          function shapeBackground(el) {
            // Hit-testing sees only what is in the viewport: bring the text there first.
            el.scrollIntoView({ block: "center", inline: "center" });
            var box = el.getBoundingClientRect();
            var stack = document.elementsFromPoint(box.left + box.width / 2, box.top + box.height / 2);
            for (var i = 0; i < stack.length; i++) {
              var e = stack[i];
              if (e === el || e.tagName === "text" || e.tagName === "tspan" || el.contains(e)) continue;
              if (e instanceof SVGGeometryElement) {
                var style = getComputedStyle(e);
                var f = rgb(style.fill);
                if (f && f.a === 1 && parseFloat(style.fillOpacity) === 1) return f;
                continue;
              }
              return htmlBackground(e);
            }
            return htmlBackground(el);
          }
          function name(el) { return (el.getAttribute("class") || el.tagName) + " '" + (el.textContent || "").trim().slice(0, 40) + "'"; }
          function inter(a, b) { return a.left < b.right - 0.5 && b.left < a.right - 0.5 && a.top < b.bottom - 0.5 && b.top < a.bottom - 0.5; }
          function inside(a, b) { return a.left >= b.left - 0.5 && a.top >= b.top - 0.5 && a.right <= b.right + 0.5 && a.bottom <= b.bottom + 0.5; }

          var out = { pictures: 0, labels: 0, texts: 0, minRatio: 99, overlaps: [], outside: [], lowContrast: [], transparent: [], unfitted: [] };
          var all = document.querySelectorAll("body *");
          for (var i = 0; i < all.length; i++) {
            var el = all[i];
            if (el.id === "cellc-check" || el.closest("script, style, title, head, #cellc-check, option")) continue;
            var own = false;
            for (var n = el.firstChild; n; n = n.nextSibling) if (n.nodeType === 3 && n.nodeValue.trim().length > 0) own = true;
            if (!own) continue;
            var box = el.getBoundingClientRect();
            if (box.width === 0 || box.height === 0 || getComputedStyle(el).visibility === "hidden") continue;
            var svg = el.closest("svg");
            var color = rgb(svg ? getComputedStyle(el).fill : getComputedStyle(el).color);
            if (!color) continue;
            var picture = el.closest("svg.cellc-render");
            var background = picture ? shapeBackground(el) : htmlBackground(svg || el);
            var r = ratio(color, background);
            out.texts++;
            out.minRatio = Math.min(out.minRatio, r);
            if (r < 4.5) out.lowContrast.push(name(el) + ": " + r.toFixed(2));
            if (opacity(el) < 1 || color.a < 1) out.transparent.push(name(el));
          }
          var pictures = document.querySelectorAll("svg.cellc-render");
          out.pictures = pictures.length;
          for (var p = 0; p < pictures.length; p++) {
            var frame = pictures[p].getBoundingClientRect();
            var texts = pictures[p].querySelectorAll("text");
            for (var t = 0; t < texts.length; t++) {
              var b = texts[t].getBoundingClientRect();
              if (!inside(b, frame)) out.outside.push(name(texts[t]));
            }
            var labels = Array.prototype.filter.call(pictures[p].querySelectorAll(".motif text.edge-label"), function () { return true; });
            var boxes = labels.map(function (l) { return l.getBoundingClientRect(); });
            var backs = Array.prototype.map.call(pictures[p].querySelectorAll(".motif rect.label-bg"), function (r) { return r.getBoundingClientRect(); });
            out.labels += labels.length;
            for (var a = 0; a < boxes.length; a++) {
              for (var c = a + 1; c < boxes.length; c++)
                if (inter(boxes[a], boxes[c])) out.overlaps.push(name(labels[a]) + " / " + name(labels[c]));
              for (var d = 0; d < backs.length; d++)
                if (d !== a && inter(boxes[a], backs[d])) out.overlaps.push(name(labels[a]) + " on another label's background");
              if (backs[a] && (boxes[a].width > backs[a].width + 0.5)) out.unfitted.push(name(labels[a]) + ": " + boxes[a].width.toFixed(1) + " > " + backs[a].width.toFixed(1));
            }
          }
          // The checks scrolled the page; a screenshot of it starts at the top.
          window.scrollTo(0, 0);
          var pre = document.createElement("pre");
          pre.id = "cellc-check";
          pre.textContent = JSON.stringify(out);
          document.body.appendChild(pre);
        });
        </script>
        """;
}
