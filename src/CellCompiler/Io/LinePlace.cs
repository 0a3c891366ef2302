namespace CellCompiler.Io;

/// <summary>Where a line sits in an input: a file (or "&lt;stdin&gt;") and its physical line number (from 1).</summary>
public readonly record struct LinePlace(string File, long Line)
{
    public override string ToString() => $"{File}:{Line}";
}
