using System.Diagnostics;
using CellCompiler.Screening;
using Spectre.Console;

namespace CellCompiler.Cli.Output;

/// <summary>
/// Progress of a screening run on stderr: a live line on a terminal (Spectre.Console), otherwise a
/// plain line every few seconds and always a final one, so that logs of batch jobs stay readable and
/// end with the totals. Counts include the records of an earlier run that this one resumed, out of
/// the candidates of the whole input (or shard), so "done" never passes the total.
/// </summary>
public sealed class ProgressDisplay : IDisposable
{
    private static readonly TimeSpan PlainInterval = TimeSpan.FromSeconds(5);
    private static readonly TimeSpan LiveInterval = TimeSpan.FromMilliseconds(200);

    private readonly Stopwatch _clock = Stopwatch.StartNew();
    private readonly IAnsiConsole? _console;
    private long? _total;
    private long _resumed;
    private TimeSpan _lastShown = TimeSpan.Zero;
    private bool _liveLineShown;
    private ScreeningSummary? _last;

    public ProgressDisplay(bool enabled)
    {
        Enabled = enabled;
        if (enabled && !Console.IsErrorRedirected)
            _console = AnsiConsole.Create(new AnsiConsoleSettings { Out = new AnsiConsoleOutput(Console.Error) });
    }

    public bool Enabled { get; }

    public void Start(ScreeningStart start)
    {
        _total = start.Total;
        _resumed = start.Resumed;
    }

    /// <summary>Called after each record (never concurrently); shows progress when it is time to.</summary>
    public void Update(ScreeningSummary summary, bool force = false)
    {
        _last = summary;
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

    /// <summary>The final progress line, on a terminal and in logs alike.</summary>
    public void Finish()
    {
        if (_last is { } summary) Update(summary, force: true);
    }

    private string Describe(ScreeningSummary s, TimeSpan elapsed)
    {
        var checkedHere = s.Done - _resumed;
        var rate = elapsed.TotalSeconds > 0 ? checkedHere / elapsed.TotalSeconds : 0;
        var done = _total is { } total ? $"{s.Done:N0}/{total:N0}" : $"{s.Done:N0}";
        var left = _total is { } t && rate > 0 && t > s.Done ? $", ~{Formatting.Duration(TimeSpan.FromSeconds((t - s.Done) / rate))} left" : "";
        var counts = string.Join(", ", CheckStatusNames.All.Select(st => $"{st.Name()} {s.Count(st):N0}"));
        var resumed = _resumed > 0 ? $", {_resumed:N0} from the earlier run" : "";
        return $"{done} done ({rate:0.0}/s{left}{resumed}): {counts}" + (s.Cached > 0 ? $", {s.Cached:N0} from cache" : "");
    }

    public void Dispose()
    {
        if (_liveLineShown) Console.Error.WriteLine();
    }
}
