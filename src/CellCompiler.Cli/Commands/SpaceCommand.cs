using System.CommandLine;
using System.CommandLine.Parsing;
using System.Diagnostics;
using System.Globalization;
using System.Text.Json;
using CellCompiler.Cli.Options;
using CellCompiler.Cli.Output;
using CellCompiler.Input;
using CellCompiler.Spaces;

namespace CellCompiler.Cli.Commands;

/// <summary>`cellc space`: how big a search space is, how much of it is dead, how many distinct networks it holds (issue 13).</summary>
public static class SpaceCommand
{
    private static readonly CultureInfo Invariant = CultureInfo.InvariantCulture;

    public static Command Create()
    {
        var spaceFile = new Argument<string>("SPACE") { Description = "Space file (JSON, format space/1)." };
        var enumerateLimit = new Option<long>("--enumerate-limit")
        {
            Description = $"Enumerate every genotype when the space has at most N (default {SurveyOptions.DefaultEnumerateLimit:N0}; " +
                "0: always estimate); otherwise estimate from samples.",
            HelpName = "N",
            DefaultValueFactory = _ => SurveyOptions.DefaultEnumerateLimit,
            CustomParser = Count(0, 1_000_000_000_000),
        };
        var samples = new Option<long>("--samples")
        {
            Description = $"Uniform samples for the estimates and for the params and MACs percentiles (default {SurveyOptions.DefaultSamples:N0}, " +
                $"at most {SurveyOptions.MaxSamples:N0}).",
            HelpName = "K",
            DefaultValueFactory = _ => SurveyOptions.DefaultSamples,
            CustomParser = Count(0, SurveyOptions.MaxSamples),
        };
        var seed = new Option<long>("--seed")
        {
            Description = "Seed of the samples; the same seed and options give the same report.",
            HelpName = "S",
            DefaultValueFactory = _ => 0,
            CustomParser = HumanNumber.LongNumber,
        };
        var jobs = new Option<int>("--jobs", "-j")
        {
            Description = "Parallel workers (default: one per core).",
            HelpName = "N",
            DefaultValueFactory = _ => Environment.ProcessorCount,
            CustomParser = r => HumanNumber.WholeNumber(1, 256)(r),
        };
        var json = new Option<bool>("--json") { Description = "Print one JSON object instead of the summary." };
        var skeleton = new SkeletonOptions();

        var command = new Command("space",
            "Report a search space: its exact genotype count, its dead fraction and its distinct networks (by network_hash " +
            "under the skeleton's merge mode; exact by enumeration up to --enumerate-limit genotypes, else estimated from " +
            "uniform samples: Chao1 with a Good-Turing upper end, 95% intervals), and params and MACs percentiles of live samples under the skeleton.");
        command.Arguments.Add(spaceFile);
        foreach (var option in new Option[] { enumerateLimit, samples, seed, jobs, json })
            command.Options.Add(option);
        skeleton.AddTo(command);

        command.SetAction(parse =>
        {
            var path = parse.GetValue(spaceFile)!;
            var space = SpaceReader.ReadFile(path);
            var resolved = skeleton.Resolve(parse);
            var options = new SurveyOptions(parse.GetValue(enumerateLimit), (int)parse.GetValue(samples), parse.GetValue(seed), parse.GetValue(jobs));
            foreach (var name in space.UnusedDeclarations)
                Console.Error.WriteLine($"cellc space: warning: {TerminalText.Safe(path)}: primitives.{name} is declared but levels[0].ops does not list it");

            SpaceSurvey survey;
            using (var progress = new Progress())
                survey = SpaceSurveyor.Run(space, resolved, options, progress.Show);
            if (parse.GetValue(json))
            {
                using var stdout = StandardStreams.Output();
                WriteJson(stdout, survey);
            }
            else
            {
                WriteText(Console.Out, survey);
            }
            return ExitCodes.Ok;
        });
        return command;
    }

    /// <summary>A whole count in [min, max], typed as 1000000, 1e6 or 1M.</summary>
    private static Func<ArgumentResult, long> Count(long min, long max) => result =>
    {
        var token = result.Tokens.Count > 0 ? result.Tokens[0].Value : "";
        var name = (result.Parent as OptionResult)?.Option.Name ?? "option";
        var value = HumanNumber.TryParseCount(token, out var problem);
        if (value is null) { result.AddError($"{name}: '{token}' {problem}"); return min; }
        if (value != Math.Floor(value.Value) || value < min || value > max)
        {
            result.AddError($"{name} must be a whole number from {min:N0} to {max:N0}, found '{token}'");
            return min;
        }
        return (long)value.Value;
    };

    private static void WriteJson(Stream stream, SpaceSurvey s)
    {
        using var writer = JsonOutput.Writer(stream);
        writer.WriteStartObject();
        writer.WriteString("space", s.Space.Name);
        writer.WriteString("format", SearchSpace.FormatTag);
        writer.WriteStartArray("levels");
        for (var k = 0; k < s.Space.Levels.Count; k++)
        {
            var level = s.Space.Levels[k];
            writer.WriteStartObject();
            writer.WriteNumber("nodes", level.Nodes);
            writer.WriteNumber("motifs", level.Motifs);
            writer.WriteNumber("pairs", level.Pairs);
            writer.WriteStartArray("ops");
            foreach (var op in s.Space.Alphabet(k)) writer.WriteStringValue(op);
            writer.WriteEndArray();
            writer.WriteString("labellings_per_motif", s.Space.LabellingsPerMotif(k).ToString(Invariant));
            writer.WriteEndObject();
        }
        writer.WriteEndArray();
        writer.WriteString("genotypes", s.Space.Genotypes.ToString(Invariant));
        writer.WriteNumber("log10_genotypes", Math.Round(s.Space.Log10Genotypes, 6));
        writer.WritePropertyName("skeleton");
        s.Skeleton.WriteJson(writer);
        writer.WriteString("merge", Skeleton.MergeName(s.Skeleton.Merge));
        writer.WriteString("method", s.Method);
        if (s.Enumeration is { } e)
        {
            writer.WriteNumber("dead", e.Dead);
            writer.WriteNumber("live", e.Live);
            writer.WriteNumber("dead_fraction", e.Genotypes == 0 ? 0 : (double)e.Dead / e.Genotypes);
            writer.WriteNumber("distinct_networks", e.Networks);
        }
        else
        {
            writer.WriteNumber("dead_fraction", s.DeadFraction.Value);
            WriteInterval(writer, "dead_fraction_interval", s.DeadFraction);
            writer.WriteNumber("distinct_networks", Math.Round(s.Networks.Value, 1));
            WriteInterval(writer, "distinct_networks_interval", s.Networks, digits: 1);
            var estimate = s.Estimate!;
            var c = estimate.Chao1;
            writer.WriteStartObject("estimator");
            writer.WriteString("name", c.Form switch
            {
                Chao1Form.Classic => "chao1",
                Chao1Form.BiasCorrected => "chao1-bias-corrected",
                Chao1Form.Observed => "chao1-observed",
                _ => throw new InvalidOperationException($"unknown Chao1 form {c.Form}"),
            });
            writer.WriteNumber("confidence", 0.95);
            writer.WriteNumber("live_samples", c.Sample);
            writer.WriteNumber("observed", c.Observed);
            writer.WriteNumber("singletons", c.Singletons);
            writer.WriteNumber("doubletons", c.Doubletons);
            writer.WriteNumber("variance", Math.Round(c.Variance, 3));
            writer.WriteNumber("coverage", Math.Round(c.Coverage, 6));
            writer.WriteNumber("chao1", Math.Round(c.Estimate, 1));
            WriteInterval(writer, "chao1_interval", new Bounded(c.Estimate, c.Lower, c.Upper), digits: 1);
            writer.WriteString("upper_end", "good-turing");
            writer.WriteNumber("missing_mass", Math.Round(estimate.Missing.Estimate, 6));
            WriteInterval(writer, "missing_mass_interval", new Bounded(estimate.Missing.Estimate, estimate.Missing.Lower, estimate.Missing.Upper));
            writer.WriteNumber("live_genotypes_upper", Math.Round(estimate.LiveGenotypesUpper, 1));
            writer.WriteBoolean("maybe_all_seen", estimate.MaybeAllSeen);
            // The value is Chao1, a lower bound; with little coverage (README, measured) read it as a floor. The interval holds either way.
            writer.WriteBoolean("lower_bound_only", c.Coverage < 0.5);
            writer.WriteEndObject();
            writer.WriteString("dead_fraction_method", "Wilson score interval, 95%");
        }
        writer.WriteNumber("samples", s.Samples);
        writer.WriteNumber("sample_dead", s.SampleDead);
        writer.WriteNumber("sample_networks", s.SampleNetworks);
        writer.WriteNumber("inexact_hashes", s.InexactHashes);
        writer.WriteStartObject("figures");
        writer.WriteNumber("live_samples", s.Figures.Measured + s.Figures.Failures);
        writer.WriteNumber("measured", s.Figures.Measured);
        writer.WriteNumber("failures", s.Figures.Failures);
        if (s.Figures.FirstFailure is { } failure) writer.WriteString("first_failure", failure);
        WritePercentiles(writer, "params", s.Figures.Params);
        WritePercentiles(writer, "macs", s.Figures.Macs);
        writer.WriteEndObject();
        writer.WriteNumber("seed", s.Options.Seed);
        writer.WriteNumber("workers", s.Options.WorkerCount);
        writer.WriteNumber("seconds", Math.Round(s.Elapsed.TotalSeconds, 3));
        writer.WriteEndObject();
        writer.Flush();
        stream.WriteByte((byte)'\n');
    }

    private static void WriteInterval(Utf8JsonWriter writer, string name, Bounded value, int digits = 6)
    {
        writer.WriteStartArray(name);
        writer.WriteNumberValue(Math.Round(value.Lower, digits));
        writer.WriteNumberValue(Math.Round(value.Upper, digits));
        writer.WriteEndArray();
    }

    private static void WritePercentiles(Utf8JsonWriter writer, string name, Percentiles? percentiles)
    {
        if (percentiles is null) { writer.WriteNull(name); return; }
        writer.WriteStartObject(name);
        foreach (var (key, value) in percentiles.Named()) writer.WriteNumber(key, value);
        writer.WriteEndObject();
    }

    private static void WriteText(TextWriter output, SpaceSurvey s)
    {
        var space = s.Space;
        output.WriteLine($"{TerminalText.Safe(space.Name)}  ({SearchSpace.FormatTag}, {Wording.Counted(space.Levels.Count, "level")})");
        for (var k = 0; k < space.Levels.Count; k++)
        {
            var level = space.Levels[k];
            var motifs = k == space.Levels.Count - 1 ? "the cell" : Wording.Counted(level.Motifs, "motif");
            output.WriteLine($"  level {k}      {motifs} of {level.Nodes} nodes ({Wording.Counted(level.Pairs, "pair")}) over " +
                $"{Wording.Counted(space.Alphabet(k).Count, "op")}: {string.Join(", ", level.Ops)}");
        }
        output.WriteLine($"  genotypes    {Big(space.Genotypes)}  (log10 {space.Log10Genotypes.ToString("0.###", Invariant)})");
        var merge = Skeleton.MergeName(s.Skeleton.Merge);
        if (s.Enumeration is { } e)
        {
            output.WriteLine($"  method       exact: every genotype enumerated ({s.Options.WorkerCount} workers, {s.Elapsed.TotalSeconds.ToString("0.0", Invariant)} s)");
            output.WriteLine($"  dead         {Percent(s.DeadFraction.Value)}  ({e.Dead.ToString("N0", Invariant)} genotypes; {e.Live.ToString("N0", Invariant)} live)");
            output.WriteLine($"  networks     {e.Networks.ToString("N0", Invariant)} distinct under {merge} merges (network_hash)");
        }
        else
        {
            var estimate = s.Estimate!;
            var c = estimate.Chao1;
            output.WriteLine($"  method       estimated from {Wording.Counted(s.Samples, "uniform sample")} (seed {s.Options.Seed}); 95% intervals");
            output.WriteLine($"  dead         {Percent(s.DeadFraction.Value)}  ({Percent(s.DeadFraction.Lower)} to {Percent(s.DeadFraction.Upper)}, Wilson)");
            output.WriteLine($"  networks     about {Formatting.Scaled(s.Networks.Value)} distinct under {merge} merges " +
                $"({Formatting.Scaled(s.Networks.Lower)} to {Formatting.Scaled(s.Networks.Upper)}; Chao1{(c.Form == Chao1Form.BiasCorrected ? " bias-corrected" : "")}, upper end Good-Turing)");
            output.WriteLine($"               {c.Observed.ToString("N0", Invariant)} seen in {c.Sample.ToString("N0", Invariant)} live samples, " +
                $"{c.Singletons.ToString("N0", Invariant)} once, {c.Doubletons.ToString("N0", Invariant)} twice; unseen networks hold about {Percent(estimate.Missing.Estimate)} of live genotypes");
            // Measured on enumerable spaces (README): when many genotypes spell a few networks and one genotype
            // spells many others, Chao1 falls short even at 60% coverage, while the interval still holds.
            if (c.Doubletons == 0 && c.Singletons == c.Observed && c.Observed > 1)
                output.WriteLine("               no network was seen twice: the space holds far more networks than these samples can count; the estimate is a floor, the interval's upper end a bound");
            else output.WriteLine(c.Coverage < 0.5
                ? "               the samples cover little of the space: read the estimate as a floor; the interval allows for the networks they missed"
                : "               Chao1 reads low when networks differ much in how many genotypes spell them; the interval allows for that");
        }
        if (s.InexactHashes > 0)
            output.WriteLine($"  caution      {s.InexactHashes:N0} hashes hit the search budget; a network may be counted more than once");
        var f = s.Figures;
        output.WriteLine($"  figures      {Wording.Counted(f.Measured, "live sample")} under the skeleton (3 significant digits)");
        if (f.Params is { } p) output.WriteLine($"  params       {Spread(p)}");
        if (f.Macs is { } m) output.WriteLine($"  MACs         {Spread(m)}");
        if (f.Failures > 0)
            output.WriteLine($"  not counted  {Wording.Counted(f.Failures, "live sample")}: {TerminalText.Safe(f.FirstFailure)}");
    }

    private static string Spread(Percentiles p) =>
        string.Join("  ", p.Named().Select(x => $"{x.Name} {Formatting.Scaled(x.Value)}"));

    private static string Percent(double fraction) => double.IsNaN(fraction) ? "n/a" : Wording.Significant(fraction * 100) + "%";

    /// <summary>The exact count, grouped, and for large counts the power of ten.</summary>
    private static string Big(System.Numerics.BigInteger value)
    {
        var digits = value.ToString(Invariant);
        if (digits.Length <= 18) return long.Parse(digits, Invariant).ToString("N0", Invariant);
        if (digits.Length > 60) return $"about 10^{digits.Length - 1} ({digits.Length} digits; --json gives them all)";
        return $"{digits}  (about {digits[0]}.{digits.Substring(1, 2)}e{digits.Length - 1})";
    }

    /// <summary>
    /// Progress on stderr once a phase has run for two seconds: a line rewritten in place on a terminal,
    /// otherwise a plain line every five seconds, so that logs of batch jobs stay readable.
    /// </summary>
    private sealed class Progress : IDisposable
    {
        private readonly Stopwatch _phaseClock = new();
        private readonly bool _terminal = !Console.IsErrorRedirected;
        private SurveyPhase? _phase;
        private TimeSpan _lastShown;
        private bool _liveLine;

        public void Show(SurveyProgress p)
        {
            if (_phase != p.Phase)
            {
                _phase = p.Phase;
                _phaseClock.Restart();
                _lastShown = TimeSpan.Zero;
            }
            var now = _phaseClock.Elapsed;
            var due = _terminal ? TimeSpan.FromMilliseconds(250) : TimeSpan.FromSeconds(5);
            var finished = p.Done >= p.Total;
            if (now < TimeSpan.FromSeconds(2) || (!finished && now - _lastShown < due)) return;
            _lastShown = now;
            var rate = now.TotalSeconds > 0 ? p.Done / now.TotalSeconds : 0;
            var left = rate > 0 && !finished ? $", ~{Formatting.Duration(TimeSpan.FromSeconds((p.Total - p.Done) / rate))} left" : "";
            var what = p.Phase switch
            {
                SurveyPhase.Enumerating => "enumerating",
                SurveyPhase.Sampling => "sampling",
                SurveyPhase.CountingFigures => "counting figures",
                _ => throw new InvalidOperationException($"unknown phase {p.Phase}"),
            };
            var line = $"cellc space: {what} {p.Done.ToString("N0", Invariant)}/{p.Total.ToString("N0", Invariant)} ({rate.ToString("N0", Invariant)}/s{left})";
            if (_terminal)
            {
                Console.Error.Write("\r\u001b[2K" + line);
                _liveLine = true;
                if (finished) { Console.Error.WriteLine(); _liveLine = false; }
            }
            else Console.Error.WriteLine(line);
        }

        public void Dispose()
        {
            if (_liveLine) Console.Error.WriteLine();
        }
    }
}
