using System.Diagnostics;
using CellCompiler.Screening;
using Spectre.Console;

namespace CellCompiler.Cli.Output;

/// <summary>
/// Progress of a screening run on stderr: a live line on a terminal (Spectre.Console), otherwise a
/// plain line every few seconds, so that logs of batch jobs stay readable.
/// </summary>
public sealed class ProgressDisplay : IDisposable
{
    private static readonly TimeSpan PlainInterval = TimeSpan.FromSeconds(5);
    private static readonly TimeSpan LiveInterval = TimeSpan.FromMilliseconds(200);

    private readonly long? _total;
    private readonly Stopwatch _clock = Stopwatch.StartNew();
    private readonly IAnsiConsole? _console;
    private TimeSpan _lastShown = TimeSpan.Zero;
    private bool _liveLineShown;

    public ProgressDisplay(long? total, bool enabled)
    {
        _total = total;
        Enabled = enabled;
        if (enabled && !Console.IsErrorRedirected)
            _console = AnsiConsole.Create(new AnsiConsoleSettings { Out = new AnsiConsoleOutput(Console.Error) });
    }

    public bool Enabled { get; }

    /// <summary>Called after each record (never concurrently); shows progress when it is time to.</summary>
    public void Update(ScreeningSummary summary, bool force = false)
    {
        if (!Enabled) return;
        var now = _clock.Elapsed;
        if (!force && now - _lastShown < (_console is null ? PlainInterval : LiveInterval)) return;
        _lastShown = now;
        var line = Describe(summary, now);
        if (_console is null)
        {
            Console.Error.WriteLine($"cellc check: {line}");
            return;
        }
        // One line rewritten in place (carriage return, clear line), cut to the width so it never wraps.
        var text = $"cellc check {line}";
        var width = Math.Max(20, _console.Profile.Width - 1);
        if (text.Length > width) text = text[..(width - 1)] + "~";
        _console.Write(new Text("\r\u001b[2K"));
        _console.Markup($"[bold]{Markup.Escape(text[..11])}[/]{Markup.Escape(text[11..])}");
        _liveLineShown = true;
    }

    private string Describe(ScreeningSummary s, TimeSpan elapsed)
    {
        var rate = elapsed.TotalSeconds > 0 ? s.Done / elapsed.TotalSeconds : 0;
        var done = _total is { } total ? $"{s.Done:N0}/{total:N0}" : $"{s.Done:N0}";
        var left = _total is { } t && rate > 0 && t > s.Done ? $", ~{Formatting.Duration(TimeSpan.FromSeconds((t - s.Done) / rate))} left" : "";
        var counts = string.Join(", ", Enum.GetValues<CheckStatus>().Select(st => $"{st.Name()} {s.Count(st):N0}"));
        return $"{done} done ({rate:0.0}/s{left}): {counts}" + (s.Cached > 0 ? $", {s.Cached:N0} from cache" : "");
    }

    public void Dispose()
    {
        if (_liveLineShown) Console.Error.WriteLine();
    }
}
