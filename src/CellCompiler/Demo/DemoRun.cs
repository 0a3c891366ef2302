using System.Diagnostics;
using CellCompiler.Compilation;
using CellCompiler.Figures;
using CellCompiler.Input;
using CellCompiler.Reporting;
using CellCompiler.Rendering;
using CellCompiler.Runtime;
using CellCompiler.Sampling;
using CellCompiler.Screening;

namespace CellCompiler.Demo;

/// <summary>One file the demo wrote and what it is.</summary>
public sealed record DemoFile(string Path, string What);

/// <summary>One demo genotype compiled at one size.</summary>
public sealed record DemoCompile(string Name, string Preset, NetworkFigures Figures, string ModelPath);

/// <summary>What the demo did, for its closing summary.</summary>
public sealed record DemoResult(string Folder, IReadOnlyList<DemoCompile> Compiled, ScreeningSummary Screening, IReadOnlyList<DemoFile> Files, TimeSpan Elapsed);

/// <summary>
/// The whole job on invented data, in one folder: compile two cells at proxy and full size, screen
/// a generated population with budgets and latency for the survivors, write the results, the
/// report and the pictures. The folder is built beside the target and swapped in at the end, so a
/// re-run replaces an earlier demo whole and an interrupted run never leaves a half-made one.
/// </summary>
public static class DemoRun
{
    public const string Marker = ".cellc-demo";

    /// <summary>What the report shows: a population sampled afresh by this run (not a search generation), screened at proxy size.</summary>
    public static readonly string ReportTitle =
        $"Tide-pool classifier: {DemoData.PopulationSize} freshly sampled cells (seed {DemoData.PopulationSeed}), screened at proxy size";

    public static DemoResult Run(string folder, Action<string>? progress = null)
    {
        var clock = Stopwatch.StartNew();
        var target = Path.TrimEndingDirectorySeparator(Path.GetFullPath(folder));
        RequireReplaceable(target);
        RemoveStale(target);
        var building = $"{target}.building-{Environment.ProcessId}";
        if (Directory.Exists(building)) Directory.Delete(building, recursive: true);
        Directory.CreateDirectory(building);
        File.WriteAllText(Path.Combine(building, Marker), "A folder made by `cellc demo`; running it again replaces this folder.\n");

        var files = new List<DemoFile>();
        string Place(string relative, string what)
        {
            var path = Path.Combine(building, relative);
            Directory.CreateDirectory(Path.GetDirectoryName(path)!);
            files.Add(new DemoFile(Path.Combine(target, relative), what));
            return path;
        }

        try
        {
            // 1. Two cells from the last search, compiled at proxy and at full size.
            var compiled = new List<DemoCompile>();
            foreach (var json in new[] { DemoData.ReefCell, DemoData.KelpCell })
            {
                var genotype = GenotypeReader.Parse(json, "demo", "demo");
                File.WriteAllText(Place($"genotypes/{genotype.Name}.json", $"genotype {genotype.Name}"), json.Trim() + "\n");
                File.WriteAllText(Place($"pictures/{genotype.Name}.svg", $"picture of {genotype.Name}"), CellRenderer.Svg(genotype));
                foreach (var preset in new[] { "proxy", "full" })
                {
                    progress?.Invoke($"compiling {genotype.Name} at {preset} size");
                    var model = Compiler.Compile(genotype, SkeletonPresets.All[preset]);
                    var relative = $"models/{genotype.Name}.{preset}.onnx";
                    File.WriteAllBytes(Place(relative, $"{genotype.Name} at {preset} size"), model.OnnxBytes);
                    compiled.Add(new DemoCompile(genotype.Name, preset, model.Figures, Path.Combine(target, relative)));
                }
            }

            // 2. A generated population, screened with the scenario's budgets; latency for the survivors.
            var populationPath = Place("population.jsonl", $"{DemoData.PopulationSize} generated genotypes");
            File.WriteAllText(Place("primitives.json", "the team's declared primitives (cellc sample --primitives)"), DemoData.PrimitivesJson.Trim() + "\n");
            var sampler = new GenotypeSampler(DemoData.PopulationNodes, DemoData.PopulationMotifs, seed: DemoData.PopulationSeed,
                primitives: DemoData.Primitives, ops: DemoData.PopulationOps);
            using (var writer = new StreamWriter(populationPath))
                foreach (var genotype in sampler.Sample(DemoData.PopulationSize))
                    writer.Write(GenotypeJson.Serialize(genotype, genotype.Id) + "\n");

            progress?.Invoke($"screening {DemoData.PopulationSize} candidates");
            var resultsPath = Place("results.jsonl", "one check record per candidate (cellc check --json)");
            var screening = ScreeningSession.Run(new ScreeningRequest
            {
                Inputs = [populationPath],
                Options = new CheckOptions(SkeletonPresets.All["proxy"], CompileOptions.Default,
                    new Budgets(MaxParams: DemoData.MaxParams, MaxMacs: DemoData.MaxMacs),
                    Latency: new LatencySettings(Threads: 1, Warmup: 3, Runs: 20)),
                Ordered = true,
                OutPath = resultsPath,
                WriteSettings = false,
            }, new Quiet(), () => Stream.Null);
            var summary = screening.Summary;

            // 3. The report, with the pictures of the cells on its Pareto fronts.
            progress?.Invoke("writing the report");
            ReportResult report;
            using (var results = File.OpenRead(resultsPath))
                report = HtmlReport.Build(results, "results.jsonl", new ReportOptions
                {
                    Title = ReportTitle,
                    GenotypesPath = populationPath,
                    GenotypesDisplayName = "population.jsonl",
                    DrawCell = CellRenderer.Svg,
                });
            File.WriteAllBytes(Place("report.html", "the screening report (open in a browser; self-contained)"), report.Utf8());
            var front = report.FrontIds.ToHashSet(StringComparer.Ordinal);
            foreach (var candidate in PopulationReader.ReadFile(populationPath))
                if (front.Contains(candidate.Id) && candidate.Genotype is { } genotype)
                    File.WriteAllText(Place($"pictures/front-{candidate.Id}.svg", $"picture of Pareto-front cell {candidate.Id}"), CellRenderer.Svg(genotype));

            SwapIn(building, target);
            return new DemoResult(target, compiled, summary, files, clock.Elapsed);
        }
        catch
        {
            try { Directory.Delete(building, recursive: true); } catch (IOException) { }
            throw;
        }
    }

    /// <summary>Only an empty folder or an earlier demo (it carries the marker) may be replaced.</summary>
    private static void RequireReplaceable(string target)
    {
        if (File.Exists(target))
            throw new InputException(target, "", "is a file; the demo needs a folder");
        var here = Path.TrimEndingDirectorySeparator(Path.GetFullPath(Environment.CurrentDirectory)) + Path.DirectorySeparatorChar;
        if (here.StartsWith(target + Path.DirectorySeparatorChar, StringComparison.Ordinal))
            throw new InputException(target, "", "is the current folder or holds it; the demo replaces its folder whole, so choose a folder below this one");
        if (Directory.Exists(target) && Directory.EnumerateFileSystemEntries(target).Any() && !File.Exists(Path.Combine(target, Marker)))
            throw new InputException(target, "", "exists and was not made by `cellc demo`; choose another folder with --dir");
    }

    /// <summary>Folders `TARGET.building-PID` and `TARGET.old-PID` of demo runs that were killed (their process is gone).</summary>
    private static void RemoveStale(string target)
    {
        var parent = Path.GetDirectoryName(target)!;
        var name = Path.GetFileName(target);
        IEnumerable<string> folders;
        try { folders = Directory.EnumerateDirectories(parent, name + ".*-*").ToList(); }
        catch (Exception e) when (e is IOException or UnauthorizedAccessException) { return; }
        foreach (var folder in folders)
        {
            var suffix = Path.GetFileName(folder)[(name.Length + 1)..];
            var dash = suffix.LastIndexOf('-');
            if (dash < 0 || suffix[..dash] is not ("building" or "old")) continue;
            if (!int.TryParse(suffix[(dash + 1)..], System.Globalization.NumberStyles.None, System.Globalization.CultureInfo.InvariantCulture, out var pid)) continue;
            if (Io.AtomicFile.ProcessIsRunning(pid)) continue;
            try { Directory.Delete(folder, recursive: true); } catch (Exception e) when (e is IOException or UnauthorizedAccessException) { }
        }
    }

    /// <summary>The demo prints its own summary; warnings of the screening cannot occur on its own data.</summary>
    private sealed class Quiet : IScreeningObserver
    {
        public void Started(ScreeningStart start) { }
        public void Checked(CheckRecord record, ScreeningSummary summary) { }
        public void Warning(string message) => throw new InvalidOperationException($"the demo's own screening warned: {message}");
    }

    private static void SwapIn(string building, string target)
    {
        var old = $"{target}.old-{Environment.ProcessId}";
        if (Directory.Exists(target)) Directory.Move(target, old);
        Directory.Move(building, target);
        if (Directory.Exists(old)) Directory.Delete(old, recursive: true);
    }
}
